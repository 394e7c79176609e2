//! A fixed-capacity ring addressed by an index that only grows: the storage
//! of the reorder buffer and the load and store queues.

/// A fixed-capacity ring addressed by a global index that only grows.
///
/// The slot array is a power of two long, so an index maps to its slot with a
/// mask; the configured capacity bounds how many entries are live.
#[derive(Debug)]
pub(crate) struct Ring<T> {
    slots: Vec<Option<T>>,
    mask: u64,
    capacity: usize,
    pub head: u64,
    pub tail: u64,
}

impl<T: Copy> Ring<T> {
    pub(crate) fn new(capacity: usize) -> Ring<T> {
        let n = capacity.next_power_of_two();
        Ring {
            slots: vec![None; n],
            mask: n as u64 - 1,
            capacity,
            head: 0,
            tail: 0,
        }
    }
    pub(crate) fn is_empty(&self) -> bool {
        self.head == self.tail
    }
    pub(crate) fn len(&self) -> usize {
        (self.tail - self.head) as usize
    }
    pub(crate) fn is_full(&self) -> bool {
        self.len() == self.capacity
    }
    pub(crate) fn push(&mut self, v: T) -> u64 {
        debug_assert!(!self.is_full());
        let i = self.tail;
        self.slots[(i & self.mask) as usize] = Some(v);
        self.tail += 1;
        i
    }
    pub(crate) fn pop(&mut self) -> T {
        let v = self.slots[(self.head & self.mask) as usize]
            .take()
            .expect("live queue entry");
        self.head += 1;
        v
    }
    pub(crate) fn get(&self, i: u64) -> &T {
        self.slots[(i & self.mask) as usize]
            .as_ref()
            .expect("live queue entry")
    }
    pub(crate) fn get_mut(&mut self, i: u64) -> &mut T {
        self.slots[(i & self.mask) as usize]
            .as_mut()
            .expect("live queue entry")
    }
    /// The live entries, oldest first.
    pub(crate) fn iter(&self) -> impl Iterator<Item = &T> {
        (self.head..self.tail).map(move |i| self.get(i))
    }
}

//! A queue of future events, ordered by (cycle, sequence number).
//!
//! The sequence number is the order of scheduling, so two events of the same
//! cycle always come out in the order they were made: processing is
//! deterministic whether the caller advances one cycle at a time or jumps.

use std::cmp::Ordering;
use std::collections::BinaryHeap;

use crate::Cycle;

/// An event with its key: the cycle in the high 64 bits, the sequence
/// number in the low 64 bits, so one integer compare orders both.
#[derive(Clone)]
struct Entry<E> {
    key: u128,
    event: E,
}

impl<E> Entry<E> {
    fn cycle(&self) -> Cycle {
        (self.key >> 64) as Cycle
    }
}

impl<E> PartialEq for Entry<E> {
    fn eq(&self, other: &Self) -> bool {
        self.key == other.key
    }
}

impl<E> Eq for Entry<E> {}

impl<E> PartialOrd for Entry<E> {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

impl<E> Ord for Entry<E> {
    /// Reversed, so that the max-heap yields the earliest entry first.
    fn cmp(&self, other: &Self) -> Ordering {
        other.key.cmp(&self.key)
    }
}

/// Min-queue of events keyed by (cycle, sequence number).
#[derive(Clone)]
pub(crate) struct EventQueue<E> {
    heap: BinaryHeap<Entry<E>>,
    seq: u64,
}

impl<E> EventQueue<E> {
    /// An empty queue with room for `capacity` events before it grows.
    pub fn with_capacity(capacity: usize) -> Self {
        Self {
            heap: BinaryHeap::with_capacity(capacity),
            seq: 0,
        }
    }

    /// Schedule `event` at `cycle`.
    pub fn push(&mut self, cycle: Cycle, event: E) {
        self.heap.push(Entry {
            key: (u128::from(cycle) << 64) | u128::from(self.seq),
            event,
        });
        self.seq += 1;
    }

    /// Cycle of the earliest event.
    pub fn peek_cycle(&self) -> Option<Cycle> {
        self.heap.peek().map(Entry::cycle)
    }

    /// Remove the earliest event if its cycle is at most `limit`.
    pub fn pop_until(&mut self, limit: Cycle) -> Option<(Cycle, E)> {
        if self.heap.peek()?.cycle() > limit {
            return None;
        }
        self.heap.pop().map(|e| (e.cycle(), e.event))
    }

    /// Number of pending events.
    pub fn len(&self) -> usize {
        self.heap.len()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn same_cycle_keeps_scheduling_order() {
        let mut q = EventQueue::with_capacity(4);
        q.push(5, 'b');
        q.push(3, 'a');
        q.push(5, 'c');
        q.push(4, 'x');
        let mut got = Vec::new();
        while let Some((c, e)) = q.pop_until(5) {
            got.push((c, e));
        }
        assert_eq!(got, vec![(3, 'a'), (4, 'x'), (5, 'b'), (5, 'c')]);
        assert_eq!(q.len(), 0);
    }
}

//! Sparse paged memory for the functional model.
//!
//! The address space is a sorted list of mapped [`Region`]s (the program's
//! segments and the stack). Bytes live in 4 KiB pages that are materialised on
//! the first write; a byte of a mapped region that was never written reads as
//! zero, so a huge untouched region costs nothing. Materialised pages count
//! against a cap ([`Memory::cap_bytes`]); exceeding it is
//! [`MemError::CapExceeded`], never a host out-of-memory.
//!
//! One access reads or writes 1, 2, 4 or 8 bytes, little-endian; misaligned
//! accesses are allowed and may span two pages. An access outside every
//! region is [`MemError::Unmapped`]; a store to a region that is not writable
//! is [`MemError::ReadOnly`].
//!
//! Fast path: a small direct-mapped cache of page translations, indexed by the
//! low bits of the page number. An entry exists only for a page that lies
//! wholly inside mapped regions, and says whether the whole page may be
//! written. A hit costs a tag compare and a copy; the page map (a `BTreeMap`)
//! and the region list are consulted only on a miss, for an access that
//! crosses a page, or for a page that a region boundary cuts.

use std::cell::Cell;
use std::collections::BTreeMap;
use thiserror::Error;

/// Size of a page in bytes.
pub const PAGE_BYTES: u64 = 4096;
const PAGE_SHIFT: u32 = 12;
const PAGE_MASK: u64 = PAGE_BYTES - 1;
/// Entries in the page-translation cache (a power of two): 1 MiB of reach.
const CACHE_ENTRIES: usize = 256;
/// Page slot 0 is a shared page of zeros that is never written: untouched
/// pages of mapped regions read through it.
const ZERO_PAGE: u32 = 0;

type Page = Box<[u8; PAGE_BYTES as usize]>;

/// A mapped range of addresses with its permissions.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Region {
    /// A name for messages (`.text`, `.data`, `stack`).
    pub name: String,
    /// First address.
    pub start: u64,
    /// One past the last address.
    pub end: u64,
    /// Whether stores may write it.
    pub writable: bool,
    /// Whether instructions may be fetched from it.
    pub executable: bool,
}

impl Region {
    /// Whether `addr` lies in the region.
    pub fn contains(&self, addr: u64) -> bool {
        (self.start..self.end).contains(&addr)
    }

    /// Size in bytes.
    pub fn size_bytes(&self) -> u64 {
        self.end - self.start
    }
}

/// A failed memory operation.
#[derive(Clone, Debug, PartialEq, Eq, Error)]
pub enum MemError {
    /// Some byte of the access lies outside every mapped region.
    #[error("address {addr:#x} ({size_bytes} bytes) is outside every mapped region")]
    Unmapped {
        /// First address of the access.
        addr: u64,
        /// Size of the access in bytes.
        size_bytes: u64,
    },
    /// A store to a region that is not writable.
    #[error("address {addr:#x} is in read-only region {region}")]
    ReadOnly {
        /// First address of the access.
        addr: u64,
        /// Name of the read-only region.
        region: String,
    },
    /// Materialising another page would exceed the cap on touched memory.
    #[error(
        "the program touched more than the memory cap of {cap_bytes} bytes; \
         raise the cap or shrink the workload"
    )]
    CapExceeded {
        /// The configured cap.
        cap_bytes: u64,
    },
    /// A region to map overlaps one already mapped.
    #[error("region {name} [{start:#x}, {end:#x}) overlaps region {other}")]
    Overlap {
        /// Name of the new region.
        name: String,
        /// Its first address.
        start: u64,
        /// One past its last address.
        end: u64,
        /// Name of the region already mapped.
        other: String,
    },
    /// A region that is empty or runs past the end of the address space.
    #[error("region {name} at {start:#x} with {size_bytes} bytes does not fit the address space")]
    BadRegion {
        /// Name of the region.
        name: String,
        /// Its first address.
        start: u64,
        /// Its requested size.
        size_bytes: u64,
    },
}

#[derive(Clone, Copy, Debug)]
struct CacheEntry {
    /// Page number, or `u64::MAX` for an empty entry (no page number is that large).
    tag: u64,
    /// Index into `Memory::pages` (`ZERO_PAGE` for an untouched page).
    page: u32,
    /// Whether the whole page may be written through this entry: it is
    /// materialised and wholly inside writable regions.
    writable: bool,
}

const EMPTY: CacheEntry = CacheEntry {
    tag: u64::MAX,
    page: ZERO_PAGE,
    writable: false,
};

/// Sparse paged memory. See the module documentation.
#[derive(Clone)]
pub struct Memory {
    /// Sorted by `start`, not overlapping.
    regions: Vec<Region>,
    /// Materialised pages; slot 0 is the shared zero page.
    pages: Vec<Page>,
    /// Page number -> slot in `pages`.
    page_slots: BTreeMap<u64, u32>,
    /// Direct-mapped translation cache. `Cell` so that reads take `&self`.
    cache: Box<[Cell<CacheEntry>; CACHE_ENTRIES]>,
    touched_bytes: u64,
    cap_bytes: u64,
}

impl std::fmt::Debug for Memory {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Memory")
            .field("regions", &self.regions)
            .field("touched_bytes", &self.touched_bytes)
            .field("cap_bytes", &self.cap_bytes)
            .finish_non_exhaustive()
    }
}

fn new_page() -> Page {
    Box::new([0; PAGE_BYTES as usize])
}

macro_rules! access_fns {
    ($(($read:ident, $write:ident, $ty:ty, $n:literal)),*) => {$(
        #[doc = concat!("Reads a little-endian `", stringify!($ty), "`.")]
        #[inline(always)]
        pub fn $read(&self, addr: u64) -> Result<$ty, MemError> {
            self.read::<$n>(addr).map(<$ty>::from_le_bytes)
        }

        #[doc = concat!("Writes a little-endian `", stringify!($ty), "`.")]
        #[inline(always)]
        pub fn $write(&mut self, addr: u64, value: $ty) -> Result<(), MemError> {
            self.write::<$n>(addr, value.to_le_bytes())
        }
    )*};
}

impl Memory {
    /// An empty address space whose materialised pages may total at most
    /// `cap_bytes` (rounded down to whole pages).
    pub fn new(cap_bytes: u64) -> Memory {
        Memory {
            regions: Vec::new(),
            pages: vec![new_page()],
            page_slots: BTreeMap::new(),
            cache: Box::new(std::array::from_fn(|_| Cell::new(EMPTY))),
            touched_bytes: 0,
            cap_bytes,
        }
    }

    /// Maps `size_bytes` bytes at `start`, reading as zero until written.
    pub fn map(
        &mut self,
        name: &str,
        start: u64,
        size_bytes: u64,
        writable: bool,
        executable: bool,
    ) -> Result<(), MemError> {
        let end = start
            .checked_add(size_bytes)
            .filter(|_| size_bytes > 0)
            .ok_or_else(|| MemError::BadRegion {
                name: name.to_owned(),
                start,
                size_bytes,
            })?;
        let at = self.regions.partition_point(|r| r.start < start);
        let neighbours = [at.checked_sub(1), Some(at)];
        for other in neighbours.into_iter().flatten() {
            if let Some(other) = self.regions.get(other)
                && other.start < end
                && start < other.end
            {
                return Err(MemError::Overlap {
                    name: name.to_owned(),
                    start,
                    end,
                    other: other.name.clone(),
                });
            }
        }
        self.regions.insert(
            at,
            Region {
                name: name.to_owned(),
                start,
                end,
                writable,
                executable,
            },
        );
        // Page coverage and permissions may have changed.
        for entry in self.cache.iter() {
            entry.set(EMPTY);
        }
        Ok(())
    }

    /// The mapped regions, sorted by address.
    pub fn regions(&self) -> &[Region] {
        &self.regions
    }

    /// The region containing `addr`, if any.
    pub fn region_at(&self, addr: u64) -> Option<&Region> {
        let at = self.regions.partition_point(|r| r.start <= addr);
        at.checked_sub(1)
            .map(|i| &self.regions[i])
            .filter(|r| addr < r.end)
    }

    /// Bytes held by materialised pages.
    pub fn touched_bytes(&self) -> u64 {
        self.touched_bytes
    }

    /// The cap on [`Memory::touched_bytes`].
    pub fn cap_bytes(&self) -> u64 {
        self.cap_bytes
    }

    access_fns!(
        (read_u8, write_u8, u8, 1),
        (read_u16, write_u16, u16, 2),
        (read_u32, write_u32, u32, 4),
        (read_u64, write_u64, u64, 8)
    );

    /// Reads `size_bytes` (1, 2, 4 or 8) bytes, zero-extended.
    ///
    /// # Panics
    /// On any other size.
    pub fn read_sized(&self, addr: u64, size_bytes: u8) -> Result<u64, MemError> {
        match size_bytes {
            1 => self.read_u8(addr).map(u64::from),
            2 => self.read_u16(addr).map(u64::from),
            4 => self.read_u32(addr).map(u64::from),
            8 => self.read_u64(addr),
            _ => panic!("access size must be 1, 2, 4 or 8, got {size_bytes}"),
        }
    }

    /// Reads `buf.len()` bytes at `addr`. Every byte must be mapped.
    pub fn read_bytes(&self, addr: u64, buf: &mut [u8]) -> Result<(), MemError> {
        self.check_range(addr, buf.len() as u64, false)?;
        self.copy_out(addr, buf);
        Ok(())
    }

    /// Writes `bytes` at `addr`. Every byte must be mapped and writable.
    pub fn write_bytes(&mut self, addr: u64, bytes: &[u8]) -> Result<(), MemError> {
        self.check_range(addr, bytes.len() as u64, true)?;
        self.copy_in(addr, bytes)
    }

    /// Writes `bytes` at `addr` ignoring write permission: for loading a
    /// program image into read-only segments. Every byte must be mapped.
    pub fn load_bytes(&mut self, addr: u64, bytes: &[u8]) -> Result<(), MemError> {
        self.check_range(addr, bytes.len() as u64, false)?;
        self.copy_in(addr, bytes)
    }

    #[inline(always)]
    fn read<const N: usize>(&self, addr: u64) -> Result<[u8; N], MemError> {
        let page_no = addr >> PAGE_SHIFT;
        let offset = (addr & PAGE_MASK) as usize;
        let entry = self.cache[page_no as usize % CACHE_ENTRIES].get();
        if entry.tag == page_no
            && offset + N <= PAGE_BYTES as usize
            && let Some(page) = self.pages.get(entry.page as usize)
        {
            let mut out = [0; N];
            out.copy_from_slice(&page[offset..offset + N]);
            return Ok(out);
        }
        self.read_slow(addr)
    }

    #[inline(always)]
    fn write<const N: usize>(&mut self, addr: u64, bytes: [u8; N]) -> Result<(), MemError> {
        let page_no = addr >> PAGE_SHIFT;
        let offset = (addr & PAGE_MASK) as usize;
        let entry = self.cache[page_no as usize % CACHE_ENTRIES].get();
        if entry.tag == page_no
            && entry.writable
            && offset + N <= PAGE_BYTES as usize
            && let Some(page) = self.pages.get_mut(entry.page as usize)
        {
            page[offset..offset + N].copy_from_slice(&bytes);
            return Ok(());
        }
        self.write_slow(addr, &bytes)
    }

    #[cold]
    #[inline(never)]
    fn read_slow<const N: usize>(&self, addr: u64) -> Result<[u8; N], MemError> {
        let mut out = [0; N];
        self.read_bytes(addr, &mut out)?;
        self.refill(addr >> PAGE_SHIFT);
        Ok(out)
    }

    #[cold]
    #[inline(never)]
    fn write_slow(&mut self, addr: u64, bytes: &[u8]) -> Result<(), MemError> {
        self.write_bytes(addr, bytes)
    }

    /// Checks that `[addr, addr + len)` is mapped (and writable if `write`).
    fn check_range(&self, addr: u64, len: u64, write: bool) -> Result<(), MemError> {
        let unmapped = MemError::Unmapped {
            addr,
            size_bytes: len,
        };
        let end = addr.checked_add(len).ok_or_else(|| unmapped.clone())?;
        let mut cur = addr;
        while cur < end {
            let region = self.region_at(cur).ok_or_else(|| unmapped.clone())?;
            if write && !region.writable {
                return Err(MemError::ReadOnly {
                    addr,
                    region: region.name.clone(),
                });
            }
            cur = region.end;
        }
        Ok(())
    }

    /// Copies bytes out, page by page; the range is known to be mapped.
    fn copy_out(&self, addr: u64, buf: &mut [u8]) {
        let mut done = 0;
        while done < buf.len() {
            let a = addr + done as u64;
            let offset = (a & PAGE_MASK) as usize;
            let n = (PAGE_BYTES as usize - offset).min(buf.len() - done);
            let chunk = &mut buf[done..done + n];
            match self.page_slots.get(&(a >> PAGE_SHIFT)) {
                Some(&slot) => {
                    chunk.copy_from_slice(&self.pages[slot as usize][offset..offset + n])
                }
                None => chunk.fill(0),
            }
            done += n;
        }
    }

    /// Copies bytes in, materialising pages; the range is known to be mapped
    /// (and writable, where that matters). Every page is materialised before
    /// any byte is written, so a cap error leaves memory unchanged.
    fn copy_in(&mut self, addr: u64, bytes: &[u8]) -> Result<(), MemError> {
        if bytes.is_empty() {
            return Ok(());
        }
        let first = addr >> PAGE_SHIFT;
        let last = (addr + bytes.len() as u64 - 1) >> PAGE_SHIFT;
        let new_pages = (first..=last)
            .filter(|p| !self.page_slots.contains_key(p))
            .count() as u64;
        if self.touched_bytes + new_pages * PAGE_BYTES > self.cap_bytes {
            return Err(MemError::CapExceeded {
                cap_bytes: self.cap_bytes,
            });
        }
        let mut done = 0;
        for page_no in first..=last {
            let slot = self.materialise(page_no);
            let a = addr + done as u64;
            let offset = (a & PAGE_MASK) as usize;
            let n = (PAGE_BYTES as usize - offset).min(bytes.len() - done);
            self.pages[slot as usize][offset..offset + n].copy_from_slice(&bytes[done..done + n]);
            done += n;
        }
        self.refill(first);
        Ok(())
    }

    /// The slot of a page, creating it if needed (the cap is checked by the caller).
    fn materialise(&mut self, page_no: u64) -> u32 {
        if let Some(&slot) = self.page_slots.get(&page_no) {
            return slot;
        }
        let slot = u32::try_from(self.pages.len()).expect("fewer than 2^32 pages");
        self.pages.push(new_page());
        self.page_slots.insert(page_no, slot);
        self.touched_bytes += PAGE_BYTES;
        self.refill(page_no);
        slot
    }

    /// Refreshes the cache entry for a page: installs it if the whole page is
    /// mapped, else leaves the entry empty.
    fn refill(&self, page_no: u64) {
        let cell = &self.cache[page_no as usize % CACHE_ENTRIES];
        let Some(start) = page_no.checked_mul(PAGE_BYTES) else {
            return;
        };
        let last = start + PAGE_MASK;
        let mut writable = true;
        let mut cur = start;
        loop {
            let Some(region) = self.region_at(cur) else {
                if cell.get().tag == page_no {
                    cell.set(EMPTY);
                }
                return;
            };
            writable &= region.writable;
            if region.end > last {
                break;
            }
            cur = region.end;
        }
        let page = self.page_slots.get(&page_no).copied().unwrap_or(ZERO_PAGE);
        cell.set(CacheEntry {
            tag: page_no,
            page,
            writable: writable && page != ZERO_PAGE,
        });
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn zero_page_is_never_written() {
        let mut m = Memory::new(1 << 20);
        m.map("d", 0x1000, 0x2000, true, false).unwrap();
        assert_eq!(m.read_u64(0x1000).unwrap(), 0); // installs a zero-page entry
        m.write_u64(0x1000, 7).unwrap();
        assert_eq!(m.read_u64(0x1000).unwrap(), 7);
        assert!(m.pages[ZERO_PAGE as usize].iter().all(|&b| b == 0));
        assert_eq!(m.read_u64(0x2000).unwrap(), 0);
    }

    #[test]
    fn region_boundary_inside_a_page() {
        let mut m = Memory::new(1 << 20);
        m.map("ro", 0x1000, 0x800, false, false).unwrap();
        m.map("rw", 0x1800, 0x800, true, false).unwrap();
        m.load_bytes(0x17fc, &[1, 2, 3, 4, 5, 6, 7, 8]).unwrap();
        assert_eq!(m.read_u64(0x17fc).unwrap(), 0x0807_0605_0403_0201);
        assert!(matches!(
            m.write_u8(0x17ff, 0),
            Err(MemError::ReadOnly { .. })
        ));
        m.write_u8(0x1800, 9).unwrap();
        assert!(matches!(
            m.write_u16(0x17ff, 0),
            Err(MemError::ReadOnly { .. })
        ));
        assert_eq!(m.read_u8(0x1800).unwrap(), 9);
    }
}

//! A loadable program image: memory segments, entry point and symbols.
//! Produced by the assembler and the ELF loader, consumed by the functional model.

use std::collections::BTreeMap;

/// One contiguous region of the program's address space.
///
/// Only the initialised runs are stored; every other byte of the region reads
/// as zero, so a large `.zero` or `.bss` costs nothing until it is touched.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Segment {
    /// A name for messages (`.text`, `.data`, an ELF segment index).
    pub name: String,
    /// First address of the region.
    pub addr: u64,
    /// Size of the region in bytes (at least the end of the last run).
    pub mem_size: u64,
    /// Initialised runs: (offset from `addr`, bytes), sorted by offset, not overlapping.
    pub runs: Vec<(u64, Vec<u8>)>,
    /// Whether instructions may be fetched from this region.
    pub executable: bool,
    /// Whether stores may write this region.
    pub writable: bool,
}

/// A program ready to load.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Program {
    /// The regions to map.
    pub segments: Vec<Segment>,
    /// Address of the first instruction executed.
    pub entry: u64,
    /// Symbol table (labels), for messages and tests.
    pub symbols: BTreeMap<String, u64>,
}

//! The memory pipeline for overlap: set-associative caches, miss-holding
//! registers, DRAM and prefetchers.
//!
//! Invariants: this crate knows nothing of instructions or of the reorder
//! buffer. It sees requests (id, kind, address, size, pc) and answers them with
//! acceptance or a refusal reason, then completions at cycles.
#![deny(missing_docs)]

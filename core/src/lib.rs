//! The out-of-order timing core for overlap: configuration, the cycle-level
//! machine, the cycle ledger and run statistics.
//!
//! Invariants: the core never computes values (the functional model in
//! `overlap-isa` does); it reaches memory only through `overlap-mem`'s interface.
#![deny(missing_docs)]

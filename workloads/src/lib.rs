//! Built-in parameterised microbenchmarks for overlap, generated as RV64IM
//! programs, and the named suites that group them.
//!
//! Invariants: every workload is deterministic for a given parameter set
//! (seeded data), and its program exits with a checksum of its work.
#![deny(missing_docs)]

//! Integration tests of the built-in workloads: checksums against
//! independent Rust re-implementations, memory behaviour on cold caches,
//! parameter validation, and the suites.

mod checksums;
mod memory;
mod params;
mod suites;
mod util;

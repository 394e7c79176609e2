//! Built-in parameterised microbenchmarks for overlap, generated as RV64IM
//! assembly text and assembled into a [`Program`], and the named suites that
//! group them.
//!
//! Each workload is a small kernel that stresses one part of the machine: a
//! pointer chase with `k` independent chains exposes memory-level parallelism,
//! a hash-table probe mimics the flow-table lookups of a packet-lookup
//! appliance (the scenario our examples use: a team sizing the miss handling of
//! a small core that probes flow tables, chases route-table pointers and copies
//! packet buffers), a stream measures bandwidth, and so on. [`list`] describes
//! every workload and its parameters; [`build`] generates the assembly source
//! for a parameter set and assembles it.
//!
//! ```
//! use overlap_isa::{Machine, MachineConfig};
//!
//! // Four independent pointer chains over the default 64 KiB of nodes.
//! let built = overlap_workloads::build("chase", &[("k".into(), "4".into())])?;
//! assert!(built.source.contains("measure_start:")); // the source is there to read
//! let mut machine = Machine::new(&built.program, MachineConfig::default()).unwrap();
//! let checksum = machine.run().unwrap(); // the exit code checks the work
//! # let _ = checksum;
//! # Ok::<(), overlap_workloads::WorkloadError>(())
//! ```
//!
//! Suites name lists of runs: [`suite`] gives the entries of `quick` or
//! `standard`, each a label, a workload and its overrides for [`build`].
//!
//! # Shape of every generated program
//!
//! 1. An **init phase** builds the data in memory with loops (fills, random
//!    permutations, key tables), so the assembly text stays small whatever the
//!    footprint. The init phase is part of the program, so it also runs in the
//!    timing model. It is not always cheap: a fill costs about 2 instructions
//!    per 8-byte word, a random permutation or key table 15 to 30 per entry,
//!    so for `chase`, `gather` and `hashprobe` the init phase can run more
//!    instructions than the kernel. It also leaves the data it wrote in the
//!    caches: a kernel whose data fits starts warm, one whose data does not
//!    starts with the last-written part cached.
//! 2. The label `measure_start` marks the first instruction of the **kernel**
//!    ([`Built::measure_start`]); tools that want kernel-only figures start
//!    counting there.
//! 3. The program **exits** through `ecall` with `a7 = 93` and `a0` holding a
//!    checksum of the work, so the functional result can be checked.
//!
//! # Determinism
//!
//! Every workload takes a `seed` parameter. Data comes from SplitMix64
//! generators (Steele, Lea and Flood 2014), either run at generation time in
//! Rust (fill constants) or run inside the program itself (permutations, keys,
//! indices); the [`kernels`] module documents the conventions and each
//! kernel's data, loop and checksum. The same parameters always give the same
//! source text and the same dynamic stream.
//!
//! Invariants: this crate knows nothing of time or of caches: it only writes
//! programs. Sizes are given in bytes and counts; where a size must be a whole
//! number of elements it is rounded down, and the generated source states the
//! derived sizes in its header comment.
#![deny(missing_docs)]

mod asm;
mod error;
pub mod kernels;
mod params;
mod registry;
mod rng;
mod suites;

pub use error::WorkloadError;
pub use params::{ParamKind, ParamSpec, ParamValue};
pub use registry::{Built, Generated, WorkloadInfo, build, find, generate, list};
pub use suites::{SuiteEntry, suite, suite_names};

/// Re-exported so callers can name the assembled program's type.
pub use overlap_isa::Program;

//! Shared helpers: an independent SplitMix64 and fill model, and drivers that
//! run a built workload on the functional model.

use std::fmt::Display;

use overlap_isa::{DynInst, Machine, MachineConfig};
use overlap_workloads::Built;

/// SplitMix64, written from the published algorithm.
// Source: Steele, Lea and Flood, "Fast splittable pseudorandom number
// generators", OOPSLA 2014 (constants recalled from memory of the reference
// splitmix64.c).
#[derive(Clone, Debug)]
pub struct SplitMix64(pub u64);

impl SplitMix64 {
    pub fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
}

/// Lemire's multiply-shift range reduction: `x * n / 2^64`.
// Source: Lemire, "Fast random integer generation in an interval", ACM TOMACS 2019.
pub fn below(x: u64, n: u64) -> u64 {
    ((u128::from(x) * u128::from(n)) >> 64) as u64
}

/// An arithmetic fill: word `i` is `start + i * step`.
#[derive(Clone, Copy, Debug)]
pub struct Fill {
    pub start: u64,
    pub step: u64,
}

impl Fill {
    pub fn word(&self, i: u64) -> u64 {
        self.start.wrapping_add(i.wrapping_mul(self.step))
    }
}

/// The crate's documented fill source: SplitMix64 with state `!seed`, two
/// outputs per fill (start, step | 1).
pub struct Fills(pub SplitMix64);

impl Fills {
    pub fn new(seed: u64) -> Fills {
        Fills(SplitMix64(!seed))
    }
    pub fn next_fill(&mut self) -> Fill {
        let start = self.0.next();
        let step = self.0.next() | 1;
        Fill { start, step }
    }
    pub fn raw(&mut self) -> u64 {
        self.0.next()
    }
}

/// Durstenfeld's in-place Fisher-Yates with Lemire reduction, as documented
/// by the crate.
pub fn shuffle(v: &mut [u32], rng: &mut SplitMix64) {
    for i in (1..v.len()).rev() {
        let j = below(rng.next(), i as u64 + 1) as usize;
        v.swap(i, j);
    }
}

/// Overrides as the crate takes them, `(name, value text)`, from values of
/// any printable type (`("k", 4)`, `("footprint", "64K")`, or a mix as
/// `&dyn Display`).
pub fn ov<V: Display>(pairs: &[(&str, V)]) -> Vec<(String, String)> {
    pairs
        .iter()
        .map(|(k, v)| ((*k).to_string(), v.to_string()))
        .collect()
}

/// Builds a workload with `name=value` overrides, panicking on error.
pub fn build<V: Display>(name: &str, overrides: &[(&str, V)]) -> Built {
    overlap_workloads::build(name, &ov(overrides)).unwrap_or_else(|e| panic!("{name}: {e}"))
}

/// Runs to exit; returns the exit code and the dynamic instruction count.
pub fn run(built: &Built) -> (i64, u64) {
    let mut m = Machine::new(&built.program, MachineConfig::default()).expect("loads");
    let code = m.run().unwrap_or_else(|e| panic!("{}: {e}", built.name));
    (code, m.retired())
}

/// Runs to exit; returns the exit code, the dynamic instruction count and
/// the count of instructions before `measure_start` (the init phase).
pub fn run_phases(built: &Built) -> (i64, u64, u64) {
    let start = built.measure_start().expect("measure_start label");
    let mut m = Machine::new(&built.program, MachineConfig::default()).expect("loads");
    let mut init = None;
    loop {
        if init.is_none() && m.pc() == start {
            init = Some(m.retired());
        }
        match m.step() {
            Ok(_) => {}
            Err(overlap_isa::ExecError::Halted) => break,
            Err(e) => panic!("{}: {e}", built.name),
        }
    }
    let code = m.exit_code().expect("exited");
    (code, m.retired(), init.expect("reached measure_start"))
}

/// Runs to exit, calling `f` for every instruction at or after
/// `measure_start`. Returns the exit code.
pub fn trace_kernel(built: &Built, mut f: impl FnMut(&DynInst)) -> i64 {
    let start = built.measure_start().expect("measure_start label");
    let mut m = Machine::new(&built.program, MachineConfig::default()).expect("loads");
    let mut in_kernel = false;
    loop {
        match m.step() {
            Ok(d) => {
                in_kernel |= d.pc == start;
                if in_kernel {
                    f(&d);
                }
            }
            Err(overlap_isa::ExecError::Halted) => return m.exit_code().expect("exited"),
            Err(e) => panic!("{}: {e}", built.name),
        }
    }
}

/// Address of a data symbol.
pub fn symbol(built: &Built, name: &str) -> u64 {
    *built
        .program
        .symbols
        .get(name)
        .unwrap_or_else(|| panic!("no symbol {name}"))
}

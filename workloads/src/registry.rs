//! The one table of workloads, and the public entry points that read it:
//! [`list`], [`find`], [`generate`] and [`build`].

use std::collections::BTreeMap;

use serde::Serialize;

use overlap_isa::Program;

use crate::error::{WorkloadError, did_you_mean};
use crate::kernels;
use crate::params::{ParamSpec, ParamValue, Params};

/// One entry of the table: a name, what it stresses, its parameters and its
/// generator.
pub(crate) struct Kernel {
    /// Plain name, as typed on the command line.
    pub name: &'static str,
    /// One line: what the workload stresses.
    pub description: &'static str,
    /// The workload's own parameters (the registry appends `seed`).
    pub params: fn() -> Vec<ParamSpec>,
    /// Writes the assembly source for validated parameters.
    pub generate: fn(&Params, &'static str) -> Result<String, WorkloadError>,
}

/// Every workload, sorted by name.
const KERNELS: &[Kernel] = &[
    Kernel {
        name: "alu",
        description: "integer ALU or multiply chains; `chains` sets the ILP from 1 (fully dependent) to 8",
        params: kernels::alu::params,
        generate: kernels::alu::generate,
    },
    Kernel {
        name: "branchy",
        description: "data-dependent branches taken with a set probability, from predictable to random",
        params: kernels::branchy::params,
        generate: kernels::branchy::generate,
    },
    Kernel {
        name: "chase",
        description: "pointer chase over a random or strided permutation with k independent chains (memory-level parallelism)",
        params: kernels::chase::params,
        generate: kernels::chase::generate,
    },
    Kernel {
        name: "copy",
        description: "streaming copy of one array into another (one read and one write stream)",
        params: kernels::copy::params,
        generate: kernels::copy::generate,
    },
    Kernel {
        name: "divchain",
        description: "chains of dependent divides (long, unpipelined latency)",
        params: kernels::divchain::params,
        generate: kernels::divchain::generate,
    },
    Kernel {
        name: "fill",
        description: "store-only fill of an array (store queue, write-allocate of new lines)",
        params: kernels::fill::params,
        generate: kernels::fill::generate,
    },
    Kernel {
        name: "gather",
        description: "random gather through an index array (independent misses, high memory-level parallelism)",
        params: kernels::gather::params,
        generate: kernels::gather::generate,
    },
    Kernel {
        name: "hashprobe",
        description: "flow-table lookups in an open-addressing hash table; `hit` sets the share of keys found, each found key also reads its flow record",
        params: kernels::hashprobe::params,
        generate: kernels::hashprobe::generate,
    },
    Kernel {
        name: "hitmiss",
        description: "each missing load is followed by several loads that hit (the case hit-under-miss exists for)",
        params: kernels::hitmiss::params,
        generate: kernels::hitmiss::generate,
    },
    Kernel {
        name: "listwalk",
        description: "linked-list walk reading a payload in every node",
        params: kernels::listwalk::params,
        generate: kernels::listwalk::generate,
    },
    Kernel {
        name: "matmul",
        description: "integer matrix multiply, naive (i-j-k) or tiled (blocked i-k-j)",
        params: kernels::matmul::params,
        generate: kernels::matmul::generate,
    },
    Kernel {
        name: "stencil",
        description: "2-D five-point stencil sweeps over a grid (three row streams, one write stream)",
        params: kernels::stencil::params,
        generate: kernels::stencil::generate,
    },
    Kernel {
        name: "stream",
        description: "streaming read reduction over an array (sequential bandwidth)",
        params: kernels::stream::params,
        generate: kernels::stream::generate,
    },
    Kernel {
        name: "stride",
        description: "loads at a fixed byte stride through an array, wrapping at its end",
        params: kernels::stride::params,
        generate: kernels::stride::generate,
    },
    Kernel {
        name: "triad",
        description: "a[i] = b[i] + s * c[i] over three arrays (two read streams, one write stream)",
        params: kernels::triad::params,
        generate: kernels::triad::generate,
    },
];

/// The `seed` parameter every workload has.
fn seed_spec() -> ParamSpec {
    ParamSpec::int(
        "seed",
        "seed of the workload's pseudo-random data (SplitMix64)",
        0,
        i64::MAX,
        1,
    )
}

fn kernel(name: &str) -> Option<&'static Kernel> {
    KERNELS.iter().find(|k| k.name == name)
}

fn specs(k: &Kernel) -> Vec<ParamSpec> {
    let mut specs = (k.params)();
    specs.push(seed_spec());
    specs
}

/// A workload's description: name, what it stresses, and its parameters.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct WorkloadInfo {
    /// Plain name, as typed on the command line.
    pub name: &'static str,
    /// One line: what the workload stresses.
    pub description: &'static str,
    /// Its parameters, the workload's own first and `seed` last.
    pub params: Vec<ParamSpec>,
}

fn info(k: &Kernel) -> WorkloadInfo {
    WorkloadInfo {
        name: k.name,
        description: k.description,
        params: specs(k),
    }
}

/// Every workload, sorted by name.
pub fn list() -> Vec<WorkloadInfo> {
    KERNELS.iter().map(info).collect()
}

/// The workload called `name`, if any.
pub fn find(name: &str) -> Option<WorkloadInfo> {
    kernel(name).map(info)
}

/// A workload's generated source, before assembly.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Generated {
    /// The workload's name.
    pub name: String,
    /// Every parameter with the value used (defaults included).
    pub params: BTreeMap<String, ParamValue>,
    /// The assembly source text.
    pub source: String,
}

impl Generated {
    /// Assembles the source.
    pub fn assemble(self) -> Result<Built, WorkloadError> {
        let file_name = format!("{}.s", self.name);
        let program = overlap_isa::assemble(&self.source, &file_name).map_err(|source| {
            WorkloadError::Assemble {
                workload: self.name.clone(),
                source,
            }
        })?;
        Ok(Built {
            name: self.name,
            params: self.params,
            source: self.source,
            program,
        })
    }
}

/// A workload ready to run.
#[derive(Clone, Debug)]
pub struct Built {
    /// The workload's name.
    pub name: String,
    /// Every parameter with the value used (defaults included).
    pub params: BTreeMap<String, ParamValue>,
    /// The assembly source the program was assembled from.
    pub source: String,
    /// The assembled program.
    pub program: Program,
}

impl Built {
    /// Address of the first kernel instruction (the `measure_start` label):
    /// everything before it is the init phase that builds the data.
    pub fn measure_start(&self) -> Option<u64> {
        self.program.symbols.get("measure_start").copied()
    }

    /// `name=value` pairs of every parameter, in name order, separated by
    /// spaces (e.g. for a run label).
    pub fn param_summary(&self) -> String {
        crate::params::summary(&self.params)
    }
}

fn unknown_workload(name: &str) -> WorkloadError {
    let names: Vec<&str> = KERNELS.iter().map(|k| k.name).collect();
    WorkloadError::UnknownWorkload {
        name: name.to_string(),
        suggestion: did_you_mean(name, &names),
        available: names.join(", "),
    }
}

/// Validates the overrides (`("k", "4")`: name and value text, as from a
/// command line) against the workload's parameters and writes its source.
pub fn generate(name: &str, overrides: &[(String, String)]) -> Result<Generated, WorkloadError> {
    let k = kernel(name).ok_or_else(|| unknown_workload(name))?;
    let params = Params::resolve(k.name, &specs(k), overrides)?;
    let source = (k.generate)(&params, k.description)?;
    Ok(Generated {
        name: k.name.to_string(),
        params: params.values().clone(),
        source,
    })
}

/// Builds a workload with overrides given as text (`k=4` from the command
/// line becomes `("k", "4")`): validates them, generates the source and
/// assembles it.
pub fn build(name: &str, overrides: &[(String, String)]) -> Result<Built, WorkloadError> {
    generate(name, overrides)?.assemble()
}

#[cfg(test)]
mod tests {
    use super::KERNELS;

    #[test]
    fn table_sorted_and_unique() {
        for pair in KERNELS.windows(2) {
            assert!(
                pair[0].name < pair[1].name,
                "{} before {}",
                pair[0].name,
                pair[1].name
            );
        }
    }

    #[test]
    fn defaults_in_range_and_names_unique() {
        for k in KERNELS {
            let specs = super::specs(k);
            let mut names: Vec<&str> = specs.iter().map(|s| s.name).collect();
            names.sort_unstable();
            names.dedup();
            assert_eq!(names.len(), specs.len(), "{}: duplicate parameter", k.name);
            for s in &specs {
                if let (crate::ParamKind::Int { min, max }, crate::ParamValue::Int(d)) =
                    (&s.kind, &s.default)
                {
                    assert!(min <= d && d <= max, "{}.{}", k.name, s.name);
                }
            }
        }
    }
}

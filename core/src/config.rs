//! Configuration of a whole machine: the core's sizes and widths, the branch
//! predictor, and the memory pipeline (whose types live in `overlap-mem`, next
//! to the structures they configure).
//!
//! A configuration is RON text deserialised with serde: unknown fields are
//! rejected, omitted fields take their defaults, and [`Config::validate`]
//! reports every invalid value at once with its path. [`Config::set`] changes
//! one field by its dotted path (`l1d.mshrs`, `core.rob_entries`), the value
//! written in RON syntax, which is how the command line's `--set` works.

use overlap_isa::OpClass;
use overlap_mem::{
    BankConfig, CacheConfig, CacheMode, ConfigProblem, DramConfig, HierarchyConfig, PrefetchConfig,
    PrefetchKind, Replacement,
};
use serde::{Deserialize, Serialize};
use std::fmt;

/// The whole machine.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct Config {
    /// The out-of-order core.
    pub core: CoreConfig,
    /// Branch prediction.
    pub predictor: PredictorConfig,
    /// Instruction cache; `None` means a perfect one.
    pub l1i: Option<CacheConfig>,
    /// First-level data cache.
    pub l1d: CacheConfig,
    /// Second-level cache.
    pub l2: CacheConfig,
    /// Optional third-level cache.
    pub l3: Option<CacheConfig>,
    /// Main memory.
    pub dram: DramConfig,
    /// Data prefetcher attached to the L1D.
    pub prefetch: PrefetchConfig,
}

impl Default for Config {
    fn default() -> Self {
        // The memory side's defaults live next to the memory structures.
        let HierarchyConfig {
            l1i,
            l1d,
            l2,
            l3,
            dram,
            prefetch,
        } = HierarchyConfig::default();
        Config {
            core: CoreConfig::default(),
            predictor: PredictorConfig::default(),
            l1i,
            l1d,
            l2,
            l3,
            dram,
            prefetch,
        }
    }
}

/// How a load decides that it may pass older stores.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum Disambiguation {
    /// A load waits until every older store has computed its address.
    Conservative,
    /// A load waits only for older stores whose bytes truly overlap its own.
    Perfect,
}

/// The kinds of functional unit.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
pub enum UnitKind {
    /// Integer ALU (also runs system instructions).
    Alu,
    /// Branch and jump unit.
    Branch,
    /// Integer multiplier.
    Mul,
    /// Integer divider.
    Div,
    /// Load port: address generation, then the L1D access.
    Load,
    /// Store port: address and data generation.
    Store,
}

impl UnitKind {
    /// Every kind, in declaration order.
    pub const ALL: [UnitKind; 6] = [
        UnitKind::Alu,
        UnitKind::Branch,
        UnitKind::Mul,
        UnitKind::Div,
        UnitKind::Load,
        UnitKind::Store,
    ];

    /// The unit that executes an op class.
    pub fn for_class(class: OpClass) -> UnitKind {
        match class {
            OpClass::Alu | OpClass::System => UnitKind::Alu,
            OpClass::Branch | OpClass::Jump => UnitKind::Branch,
            OpClass::Mul => UnitKind::Mul,
            OpClass::Div => UnitKind::Div,
            OpClass::Load => UnitKind::Load,
            OpClass::Store => UnitKind::Store,
        }
    }

    /// Index into per-kind tables.
    pub fn index(self) -> usize {
        self as usize
    }
}

/// One reservation station.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StationConfig {
    /// Name, used in ledger keys (`rs.<name>`).
    pub name: String,
    /// Number of entries.
    pub entries: u32,
    /// Op classes this station accepts.
    pub accepts: Vec<OpClass>,
}

/// A pool of identical functional units.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct UnitConfig {
    /// What the units execute.
    pub class: UnitKind,
    /// How many there are.
    pub count: u32,
    /// Cycles from issue to result.
    pub latency: u32,
    /// Whether a unit accepts a new operation every cycle.
    pub pipelined: bool,
}

/// The out-of-order core.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct CoreConfig {
    /// Instructions fetched per cycle.
    pub fetch_width: u32,
    /// Instructions renamed and dispatched per cycle.
    pub dispatch_width: u32,
    /// Instructions issued to functional units per cycle.
    pub issue_width: u32,
    /// Instructions retired per cycle.
    pub commit_width: u32,
    /// Cycles from fetch to dispatch.
    pub frontend_depth: u32,
    /// Reorder buffer entries.
    pub rob_entries: u32,
    /// Load queue entries.
    pub lq_entries: u32,
    /// Store queue entries.
    pub sq_entries: u32,
    /// Physical integer registers (32 hold the architectural state).
    pub phys_regs: u32,
    /// Reservation stations.
    pub stations: Vec<StationConfig>,
    /// Functional units.
    pub units: Vec<UnitConfig>,
    /// Load/store disambiguation policy.
    pub disambiguation: Disambiguation,
    /// Cycles from a load's address to its data when a store forwards it.
    pub forward_cycles: u32,
    /// Cycles without a commit after which the run stops with a model-deadlock error.
    pub watchdog_cycles: u64,
}

impl Default for CoreConfig {
    fn default() -> Self {
        use OpClass::*;
        CoreConfig {
            fetch_width: 4,
            dispatch_width: 4,
            issue_width: 6,
            commit_width: 4,
            frontend_depth: 5,
            rob_entries: 128,
            lq_entries: 32,
            sq_entries: 24,
            phys_regs: 160,
            stations: vec![
                StationConfig {
                    name: "int".into(),
                    entries: 32,
                    accepts: vec![Alu, Branch, Jump, Mul, Div, System],
                },
                StationConfig {
                    name: "mem".into(),
                    entries: 24,
                    accepts: vec![Load, Store],
                },
            ],
            units: vec![
                UnitConfig {
                    class: UnitKind::Alu,
                    count: 3,
                    latency: 1,
                    pipelined: true,
                },
                UnitConfig {
                    class: UnitKind::Branch,
                    count: 1,
                    latency: 1,
                    pipelined: true,
                },
                UnitConfig {
                    class: UnitKind::Mul,
                    count: 1,
                    latency: 3,
                    pipelined: true,
                },
                UnitConfig {
                    class: UnitKind::Div,
                    count: 1,
                    latency: 20,
                    pipelined: false,
                },
                UnitConfig {
                    class: UnitKind::Load,
                    count: 2,
                    latency: 1,
                    pipelined: true,
                },
                UnitConfig {
                    class: UnitKind::Store,
                    count: 1,
                    latency: 1,
                    pipelined: true,
                },
            ],
            disambiguation: Disambiguation::Conservative,
            forward_cycles: 1,
            watchdog_cycles: 100_000,
        }
    }
}

/// Direction predictor kinds.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum PredictorKind {
    /// Every branch predicted correctly.
    Perfect,
    /// Conditional branches predicted not taken.
    NotTaken,
    /// A table of two-bit saturating counters indexed by pc.
    Bimodal,
    /// Two-bit counters indexed by pc xor global history.
    Gshare,
}

/// Branch prediction.
#[derive(Clone, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct PredictorConfig {
    /// Direction predictor.
    pub kind: PredictorKind,
    /// log2 of the number of two-bit counters (bimodal and gshare).
    pub table_bits: u32,
    /// Global history bits (gshare).
    pub history_bits: u32,
    /// Return-address stack entries (0 disables it).
    pub ras_entries: u32,
    /// log2 of the number of entries of the indirect-target table.
    pub target_bits: u32,
}

impl Default for PredictorConfig {
    fn default() -> Self {
        PredictorConfig {
            kind: PredictorKind::Gshare,
            table_bits: 12,
            history_bits: 12,
            ras_entries: 16,
            target_bits: 9,
        }
    }
}

/// The names of the built-in presets.
pub const PRESETS: [&str; 3] = ["blocking", "hit-under-miss", "miss-under-miss"];

impl Config {
    /// A built-in preset by name. The presets differ only in the L1D's mode.
    pub fn preset(name: &str) -> Option<Config> {
        let mode = match name {
            "blocking" => CacheMode::Blocking,
            "hit-under-miss" => CacheMode::HitUnderMiss,
            "miss-under-miss" => CacheMode::MissUnderMiss,
            _ => return None,
        };
        let mut c = Config::default();
        c.l1d.mode = mode;
        Some(c)
    }

    /// Parse RON text. Omitted fields take their defaults; unknown fields are errors.
    pub fn from_ron(text: &str) -> Result<Config, ConfigError> {
        // Every field of the patch is optional: let `field: value` stand for `Some(value)`.
        let options = ron::Options::default()
            .with_default_extension(ron::extensions::Extensions::IMPLICIT_SOME);
        let patch: ConfigPatch = options.from_str(text).map_err(|e| ConfigError::Parse {
            line: e.span.start.line,
            column: e.span.start.col,
            message: user_words(&e.code.to_string()),
        })?;
        let mut config = Config::default();
        patch.apply(&mut config);
        Ok(config)
    }

    /// Pretty RON text of the whole configuration.
    pub fn to_ron(&self) -> String {
        let pretty = ron::ser::PrettyConfig::new().struct_names(false);
        ron::ser::to_string_pretty(self, pretty).expect("a config always serialises")
    }

    /// The memory side of this configuration.
    pub fn hierarchy(&self) -> HierarchyConfig {
        HierarchyConfig {
            l1i: self.l1i.clone(),
            l1d: self.l1d.clone(),
            l2: self.l2.clone(),
            l3: self.l3.clone(),
            dram: self.dram.clone(),
            prefetch: self.prefetch.clone(),
        }
    }

    /// Every problem of this configuration, each with its path.
    pub fn problems(&self) -> Vec<ConfigProblem> {
        let mut out = Vec::new();
        self.core.validate(&mut out);
        self.predictor.validate(&mut out);
        self.hierarchy().validate(&mut out);
        out
    }

    /// `Ok` when the configuration is valid, else every problem at once.
    pub fn validate(&self) -> Result<(), ConfigError> {
        let problems = self.problems();
        if problems.is_empty() {
            Ok(())
        } else {
            Err(ConfigError::Invalid(problems))
        }
    }

    /// Set one field by its dotted path; `value` is RON text of the field's type
    /// (`l1d.mode`, `Blocking`; `core.rob_entries`, `64`; `l3`, `None`).
    /// Setting a field of an absent optional cache (`l3.size_bytes`) first
    /// enables that cache with its defaults.
    pub fn set(&mut self, path: &str, value: &str) -> Result<(), ConfigError> {
        let (section, field) = match path.split_once('.') {
            Some((s, f)) => (s, Some(f)),
            None => (path, None),
        };
        let bad_path = || ConfigError::UnknownPath {
            path: path.to_string(),
        };
        let parse_err = |e: ron::error::SpannedError| ConfigError::Value {
            path: path.to_string(),
            value: value.to_string(),
            message: e.code.to_string(),
        };
        match (section, field) {
            ("core", Some(f)) if f.starts_with("stations.") || f.starts_with("units.") => {
                self.core.set_list_field(f, value)
            }
            ("core", Some(f)) => self.core.set_field(f, value),
            ("predictor", Some(f)) => self.predictor.set_field(f, value),
            ("l1d", Some(f)) => self.l1d.set_field(f, value),
            ("l2", Some(f)) => self.l2.set_field(f, value),
            ("l1i", Some(f)) => self
                .l1i
                .get_or_insert_with(CacheConfig::l1i)
                .set_field(f, value),
            ("l3", Some(f)) => self
                .l3
                .get_or_insert_with(CacheConfig::l3)
                .set_field(f, value),
            ("dram", Some(f)) => self.dram.set_field(f, value),
            ("prefetch", Some(f)) => self.prefetch.set_field(f, value),
            ("core", None) => ron::from_str(value)
                .map(|v| self.core = v)
                .map_err(parse_err),
            ("predictor", None) => ron::from_str(value)
                .map(|v| self.predictor = v)
                .map_err(parse_err),
            ("l1i", None) => ron::from_str(value)
                .map(|v| self.l1i = v)
                .map_err(parse_err),
            ("l1d", None) => ron::from_str(value)
                .map(|v| self.l1d = v)
                .map_err(parse_err),
            ("l2", None) => ron::from_str(value).map(|v| self.l2 = v).map_err(parse_err),
            ("l3", None) => ron::from_str(value).map(|v| self.l3 = v).map_err(parse_err),
            ("dram", None) => ron::from_str(value)
                .map(|v| self.dram = v)
                .map_err(parse_err),
            ("prefetch", None) => ron::from_str(value)
                .map(|v| self.prefetch = v)
                .map_err(parse_err),
            _ => Err(bad_path()),
        }
        .map_err(|e| match e {
            ConfigError::UnknownPath { .. } => bad_path(),
            ConfigError::Value { message, .. } => ConfigError::Value {
                path: path.to_string(),
                value: value.to_string(),
                message,
            },
            other => other,
        })
    }
}

/// The parser names the internal patch types; say what the user wrote instead.
fn user_words(message: &str) -> String {
    [
        ("`ConfigPatch`", "the configuration"),
        ("`CorePatch`", "`core`"),
        ("`PredictorPatch`", "`predictor`"),
        ("`CachePatch`", "a cache section"),
        ("`DramPatch`", "`dram`"),
        ("`PrefetchPatch`", "`prefetch`"),
    ]
    .iter()
    .fold(message.to_string(), |m, (from, to)| m.replace(from, to))
}

impl CoreConfig {
    /// Set one field of one station or unit: `stations.1.entries`, `units.3.latency`.
    fn set_list_field(&mut self, path: &str, value: &str) -> Result<(), ConfigError> {
        let bad_path = || ConfigError::UnknownPath {
            path: path.to_string(),
        };
        let mut parts = path.splitn(3, '.');
        let (Some(list), Some(index), Some(field)) = (parts.next(), parts.next(), parts.next())
        else {
            return Err(bad_path());
        };
        let index: usize = index.parse().map_err(|_| bad_path())?;
        let value_err = |e: ron::error::SpannedError| ConfigError::Value {
            path: path.to_string(),
            value: value.to_string(),
            message: e.code.to_string(),
        };
        match list {
            "stations" => {
                let s = self.stations.get_mut(index).ok_or_else(bad_path)?;
                match field {
                    "name" => s.name = ron::from_str(value).map_err(value_err)?,
                    "entries" => s.entries = ron::from_str(value).map_err(value_err)?,
                    "accepts" => s.accepts = ron::from_str(value).map_err(value_err)?,
                    _ => return Err(bad_path()),
                }
            }
            _ => {
                let u = self.units.get_mut(index).ok_or_else(bad_path)?;
                match field {
                    "class" => u.class = ron::from_str(value).map_err(value_err)?,
                    "count" => u.count = ron::from_str(value).map_err(value_err)?,
                    "latency" => u.latency = ron::from_str(value).map_err(value_err)?,
                    "pipelined" => u.pipelined = ron::from_str(value).map_err(value_err)?,
                    _ => return Err(bad_path()),
                }
            }
        }
        Ok(())
    }
}

/// Setting a field of a configuration section by name from RON text.
trait SetField {
    fn set_field(&mut self, field: &str, value: &str) -> Result<(), ConfigError>;
}

/// For each configuration section: [`SetField`] (set one field by name from
/// RON text), and a patch type with every field optional, so a configuration
/// file may give only the fields that differ from the defaults (a partial
/// `l2: (mshrs: 32)` keeps every other L2 default). A unit test checks that the
/// lists cover every serialised field.
macro_rules! sections {
    ($($ty:ty => $patch:ident { $($field:ident : $fty:ty),* $(,)? })*) => {$(
        impl SetField for $ty {
            fn set_field(&mut self, field: &str, value: &str) -> Result<(), ConfigError> {
                let value_err = |e: ron::error::SpannedError| ConfigError::Value {
                    path: field.to_string(),
                    value: value.to_string(),
                    message: e.code.to_string(),
                };
                match field {
                    $(stringify!($field) => {
                        self.$field = ron::from_str(value).map_err(value_err)?;
                        Ok(())
                    })*
                    _ => Err(ConfigError::UnknownPath { path: field.to_string() }),
                }
            }
        }

        #[derive(Deserialize, Default)]
        #[serde(deny_unknown_fields)]
        struct $patch {
            $(#[serde(default)] $field: Option<$fty>,)*
        }

        impl $patch {
            fn apply(self, target: &mut $ty) {
                $(if let Some(v) = self.$field { target.$field = v; })*
            }
        }
    )*};
}

sections! {
    CoreConfig => CorePatch {
        fetch_width: u32,
        dispatch_width: u32,
        issue_width: u32,
        commit_width: u32,
        frontend_depth: u32,
        rob_entries: u32,
        lq_entries: u32,
        sq_entries: u32,
        phys_regs: u32,
        stations: Vec<StationConfig>,
        units: Vec<UnitConfig>,
        disambiguation: Disambiguation,
        forward_cycles: u32,
        watchdog_cycles: u64,
    }
    PredictorConfig => PredictorPatch {
        kind: PredictorKind,
        table_bits: u32,
        history_bits: u32,
        ras_entries: u32,
        target_bits: u32,
    }
    CacheConfig => CachePatch {
        size_bytes: u64,
        ways: u32,
        line_bytes: u32,
        hit_cycles: u32,
        ports: u32,
        replacement: Replacement,
        seed: u64,
        mode: CacheMode,
        mshrs: u32,
        mshr_targets: u32,
    }
    DramConfig => DramPatch {
        latency_cycles: u32,
        channels: u32,
        transfer_cycles: u32,
        banks: Option<BankConfig>,
    }
    PrefetchConfig => PrefetchPatch {
        kind: PrefetchKind,
        degree: u32,
        distance: u32,
        table_entries: u32,
    }
}

/// A whole configuration file: every section and field optional. An optional
/// cache given as `Some((...))` is enabled with its level's defaults first.
#[derive(Deserialize, Default)]
#[serde(deny_unknown_fields)]
struct ConfigPatch {
    #[serde(default)]
    core: Option<CorePatch>,
    #[serde(default)]
    predictor: Option<PredictorPatch>,
    #[serde(default)]
    l1i: Option<CachePatch>,
    #[serde(default)]
    l1d: Option<CachePatch>,
    #[serde(default)]
    l2: Option<CachePatch>,
    #[serde(default)]
    l3: Option<CachePatch>,
    #[serde(default)]
    dram: Option<DramPatch>,
    #[serde(default)]
    prefetch: Option<PrefetchPatch>,
}

impl ConfigPatch {
    fn apply(self, c: &mut Config) {
        if let Some(p) = self.core {
            p.apply(&mut c.core);
        }
        if let Some(p) = self.predictor {
            p.apply(&mut c.predictor);
        }
        if let Some(p) = self.l1i {
            p.apply(c.l1i.get_or_insert_with(CacheConfig::l1i));
        }
        if let Some(p) = self.l1d {
            p.apply(&mut c.l1d);
        }
        if let Some(p) = self.l2 {
            p.apply(&mut c.l2);
        }
        if let Some(p) = self.l3 {
            p.apply(c.l3.get_or_insert_with(CacheConfig::l3));
        }
        if let Some(p) = self.dram {
            p.apply(&mut c.dram);
        }
        if let Some(p) = self.prefetch {
            p.apply(&mut c.prefetch);
        }
    }
}

fn problem(out: &mut Vec<ConfigProblem>, path: impl Into<String>, message: impl Into<String>) {
    out.push(ConfigProblem {
        path: path.into(),
        message: message.into(),
    });
}

impl CoreConfig {
    /// Push every problem of the core section onto `out`.
    pub fn validate(&self, out: &mut Vec<ConfigProblem>) {
        for (name, v) in [
            ("fetch_width", self.fetch_width),
            ("dispatch_width", self.dispatch_width),
            ("issue_width", self.issue_width),
            ("commit_width", self.commit_width),
            ("rob_entries", self.rob_entries),
            ("lq_entries", self.lq_entries),
            ("sq_entries", self.sq_entries),
        ] {
            if v == 0 {
                problem(out, format!("core.{name}"), "must be at least 1, got 0");
            }
        }
        for (name, v) in [
            ("fetch_width", self.fetch_width),
            ("dispatch_width", self.dispatch_width),
            ("issue_width", self.issue_width),
            ("commit_width", self.commit_width),
        ] {
            if v > 64 {
                problem(
                    out,
                    format!("core.{name}"),
                    format!("must be at most 64, got {v}"),
                );
            }
        }
        for (name, v) in [
            ("rob_entries", self.rob_entries),
            ("lq_entries", self.lq_entries),
            ("sq_entries", self.sq_entries),
        ] {
            if v > 65_536 {
                problem(
                    out,
                    format!("core.{name}"),
                    format!("must be at most 65536, got {v}"),
                );
            }
        }
        if self.frontend_depth == 0 || self.frontend_depth > 1000 {
            problem(
                out,
                "core.frontend_depth",
                format!(
                    "must be 1..=1000 (cycles from fetch to dispatch), got {}",
                    self.frontend_depth
                ),
            );
        }
        if self.phys_regs <= 32 || self.phys_regs > 65_000 {
            problem(
                out,
                "core.phys_regs",
                format!(
                    "must be more than the 32 architectural registers and at most 65000, got {}",
                    self.phys_regs
                ),
            );
        }
        if self.watchdog_cycles == 0 {
            problem(out, "core.watchdog_cycles", "must be at least 1, got 0");
        }
        if self.stations.is_empty() {
            problem(
                out,
                "core.stations",
                "needs at least one reservation station",
            );
        }
        if self.stations.len() > 16 {
            problem(
                out,
                "core.stations",
                format!("at most 16 stations, got {}", self.stations.len()),
            );
        }
        for (i, s) in self.stations.iter().enumerate() {
            let path = format!("core.stations[{i}]");
            if s.entries == 0 || s.entries > 65_536 {
                problem(
                    out,
                    format!("{path}.entries"),
                    format!("must be 1..=65536, got {}", s.entries),
                );
            }
            if s.accepts.is_empty() {
                problem(
                    out,
                    format!("{path}.accepts"),
                    "must list at least one op class",
                );
            }
            if s.name.is_empty()
                || !s
                    .name
                    .chars()
                    .all(|c| c.is_ascii_alphanumeric() || c == '_')
            {
                problem(
                    out,
                    format!("{path}.name"),
                    format!("must be letters, digits or '_', got {:?}", s.name),
                );
            }
            if self.stations[..i].iter().any(|o| o.name == s.name) {
                problem(
                    out,
                    format!("{path}.name"),
                    format!("duplicate station name {:?}", s.name),
                );
            }
            for class in &s.accepts {
                let kind = UnitKind::for_class(*class);
                if !self.units.iter().any(|u| u.class == kind && u.count > 0) {
                    problem(
                        out,
                        format!("{path}.accepts"),
                        format!("accepts {class:?} but core.units has no {kind:?} unit to run it"),
                    );
                }
            }
        }
        for class in OpClass::ALL {
            if !self.stations.iter().any(|s| s.accepts.contains(&class)) {
                problem(
                    out,
                    "core.stations",
                    format!("no station accepts {class:?} instructions"),
                );
            }
        }
        for (i, u) in self.units.iter().enumerate() {
            let path = format!("core.units[{i}]");
            if u.count == 0 || u.count > 64 {
                problem(
                    out,
                    format!("{path}.count"),
                    format!("must be 1..=64, got {}", u.count),
                );
            }
            if u.latency == 0 || u.latency > 10_000 {
                problem(
                    out,
                    format!("{path}.latency"),
                    format!("must be 1..=10000, got {}", u.latency),
                );
            }
            if self.units[..i].iter().any(|o| o.class == u.class) {
                problem(
                    out,
                    format!("{path}.class"),
                    format!("{:?} units listed twice", u.class),
                );
            }
        }
    }
}

impl PredictorConfig {
    /// Push every problem of the predictor section onto `out`.
    pub fn validate(&self, out: &mut Vec<ConfigProblem>) {
        if !(1..=24).contains(&self.table_bits) {
            problem(
                out,
                "predictor.table_bits",
                format!("must be 1..=24, got {}", self.table_bits),
            );
        }
        if self.history_bits > 24 {
            problem(
                out,
                "predictor.history_bits",
                format!("must be 0..=24, got {}", self.history_bits),
            );
        }
        if self.ras_entries > 1024 {
            problem(
                out,
                "predictor.ras_entries",
                format!("must be 0..=1024, got {}", self.ras_entries),
            );
        }
        if !(1..=20).contains(&self.target_bits) {
            problem(
                out,
                "predictor.target_bits",
                format!("must be 1..=20, got {}", self.target_bits),
            );
        }
    }
}

/// Why a configuration could not be used.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ConfigError {
    /// The RON text did not parse.
    #[error("{line}:{column}: {message}")]
    Parse {
        /// 1-based line.
        line: usize,
        /// 1-based column.
        column: usize,
        /// What the parser expected.
        message: String,
    },
    /// Values out of their allowed ranges, all of them.
    #[error("{}", ProblemList(.0))]
    Invalid(Vec<ConfigProblem>),
    /// `--set` named a field that does not exist.
    #[error("unknown configuration path '{path}'")]
    UnknownPath {
        /// The path as given.
        path: String,
    },
    /// `--set` gave a value of the wrong type.
    #[error("bad value '{value}' for '{path}': {message}")]
    Value {
        /// The path.
        path: String,
        /// The value text.
        value: String,
        /// What the parser expected.
        message: String,
    },
}

struct ProblemList<'a>(&'a [ConfigProblem]);

impl fmt::Display for ProblemList<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "invalid configuration ({} problem{}):",
            self.0.len(),
            if self.0.len() == 1 { "" } else { "s" }
        )?;
        for p in self.0 {
            write!(f, "\n  {p}")?;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn defaults_are_valid_and_presets_differ_only_in_l1d_mode() {
        Config::default().validate().unwrap();
        let presets: Vec<Config> = PRESETS.iter().map(|p| Config::preset(p).unwrap()).collect();
        for p in &presets {
            p.validate().unwrap();
            let mut q = p.clone();
            q.l1d.mode = presets[0].l1d.mode;
            assert_eq!(q, presets[0]);
        }
        assert_ne!(presets[0].l1d.mode, presets[2].l1d.mode);
    }

    #[test]
    fn ron_round_trip() {
        let c = Config::preset("blocking").unwrap();
        assert_eq!(Config::from_ron(&c.to_ron()).unwrap(), c);
    }

    #[test]
    fn set_covers_every_serialised_field() {
        // Every field that serialises must be reachable by `set`, with its own value.
        let c = Config {
            l1i: Some(CacheConfig::l1i()),
            l3: Some(CacheConfig::l3()),
            ..Config::default()
        };
        let tree: ron::Value = ron::from_str(&c.to_ron()).unwrap();
        let ron::Value::Map(sections) = tree else {
            panic!("config is a map")
        };
        for (section, body) in sections.iter() {
            let ron::Value::String(section) = section else {
                panic!()
            };
            let body = match body {
                ron::Value::Option(Some(b)) => &**b,
                b => b,
            };
            let ron::Value::Map(fields) = body else {
                panic!("{section} is a map")
            };
            for (field, _) in fields.iter() {
                let ron::Value::String(field) = field else {
                    panic!()
                };
                let path = format!("{section}.{field}");
                let text = field_ron(&c, section, field);
                let mut d = c.clone();
                d.set(&path, &text)
                    .unwrap_or_else(|e| panic!("{path}: {e}"));
                assert_eq!(d, c, "{path}");
            }
        }
    }

    /// RON text of one field, cut from the struct's own serialisation.
    fn field_ron(c: &Config, section: &str, field: &str) -> String {
        let v = serde_json::to_value(c).unwrap();
        let f = &v[section][field];
        // Re-serialise through the typed section so enums keep their names.
        let json = serde_json::to_string(f).unwrap();
        json_to_ron(&json)
    }

    /// Good enough for our config values: numbers, bools, null, enum names and lists of structs.
    fn json_to_ron(json: &str) -> String {
        let v: serde_json::Value = serde_json::from_str(json).unwrap();
        fn go(v: &serde_json::Value) -> String {
            match v {
                serde_json::Value::Null => "None".into(),
                serde_json::Value::Bool(b) => b.to_string(),
                serde_json::Value::Number(n) => n.to_string(),
                serde_json::Value::String(s) => {
                    if s.chars().next().is_some_and(|c| c.is_ascii_uppercase()) {
                        s.clone()
                    } else {
                        format!("{s:?}")
                    }
                }
                serde_json::Value::Array(a) => {
                    format!("[{}]", a.iter().map(go).collect::<Vec<_>>().join(", "))
                }
                serde_json::Value::Object(o) => format!(
                    "({})",
                    o.iter()
                        .map(|(k, v)| format!("{k}: {}", go(v)))
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            }
        }
        go(&v)
    }

    #[test]
    fn a_partial_file_keeps_every_other_default() {
        let c = Config::from_ron("(l2: (mshrs: 32), core: (rob_entries: 64), l3: Some((ways: 8)))")
            .unwrap();
        assert_eq!(
            c.l2,
            CacheConfig {
                mshrs: 32,
                ..CacheConfig::l2()
            }
        );
        assert_eq!(
            c.core,
            CoreConfig {
                rob_entries: 64,
                ..CoreConfig::default()
            }
        );
        assert_eq!(
            c.l3,
            Some(CacheConfig {
                ways: 8,
                ..CacheConfig::l3()
            })
        );
        assert_eq!(c.l1d, CacheConfig::l1d());
        assert_eq!(Config::from_ron("()").unwrap(), Config::default());
        let e = Config::from_ron("(l2: (mshr: 32))").unwrap_err();
        assert!(matches!(e, ConfigError::Parse { line: 1, .. }), "{e}");
        assert!(!e.to_string().contains("Patch"), "{e}");
        let c = Config::from_ron("(dram: (banks: Some((banks: 4))))").unwrap();
        assert_eq!(c.dram.banks.unwrap().banks, 4);
    }

    #[test]
    fn set_reports_unknown_paths_and_bad_values() {
        let mut c = Config::default();
        c.set("l1d.mode", "Blocking").unwrap();
        assert_eq!(c.l1d.mode, CacheMode::Blocking);
        c.set("core.rob_entries", "64").unwrap();
        assert_eq!(c.core.rob_entries, 64);
        assert!(matches!(
            c.set("core.rob_entrys", "64"),
            Err(ConfigError::UnknownPath { .. })
        ));
        assert!(matches!(
            c.set("nosuch.x", "1"),
            Err(ConfigError::UnknownPath { .. })
        ));
        let e = c.set("core.rob_entries", "\"many\"").unwrap_err();
        assert!(
            matches!(e, ConfigError::Value { ref path, .. } if path == "core.rob_entries"),
            "{e}"
        );
        c.set("core.stations.1.entries", "16").unwrap();
        assert_eq!(c.core.stations[1].entries, 16);
        c.set("core.units.3.latency", "30").unwrap();
        assert_eq!(c.core.units[3].latency, 30);
        assert!(matches!(
            c.set("core.stations.9.entries", "1"),
            Err(ConfigError::UnknownPath { .. })
        ));
        assert!(matches!(
            c.set("core.units.0.speed", "1"),
            Err(ConfigError::UnknownPath { .. })
        ));
        c.set("l3.size_bytes", "4194304").unwrap();
        assert_eq!(c.l3.as_ref().unwrap().size_bytes, 4 << 20);
    }

    #[test]
    fn unknown_fields_and_syntax_errors_have_positions() {
        let e = Config::from_ron("(core: (rob_entries: 64, robb: 3))").unwrap_err();
        assert!(matches!(e, ConfigError::Parse { line: 1, .. }), "{e}");
        let e = Config::from_ron("(\n  core: (rob_entries: 64,\n").unwrap_err();
        assert!(matches!(e, ConfigError::Parse { .. }), "{e}");
    }

    #[test]
    fn every_problem_is_reported_with_its_path() {
        let mut c = Config::default();
        c.core.fetch_width = 0;
        c.core.issue_width = 0;
        c.core.stations[1].accepts = vec![OpClass::Load];
        c.core.units.retain(|u| u.class != UnitKind::Div);
        let problems = c.problems();
        let text: Vec<String> = problems.iter().map(|p| p.to_string()).collect();
        assert!(
            text.iter().any(|t| t.starts_with("core.fetch_width:")),
            "{text:?}"
        );
        assert!(
            text.iter().any(|t| t.starts_with("core.issue_width:")),
            "{text:?}"
        );
        assert!(
            text.iter().any(|t| t.contains("no station accepts Store")),
            "{text:?}"
        );
        assert!(text.iter().any(|t| t.contains("no Div unit")), "{text:?}");
    }

    #[test]
    fn memory_problems_come_with_their_paths_too() {
        let mut c = Config::default();
        // 3 KiB / 64 B lines / 8 ways = 6 sets: not a power of two.
        c.l1d.size_bytes = 3 * 1024;
        c.l2.ways = 0;
        c.core.rob_entries = 0;
        let text: Vec<String> = c.problems().iter().map(|p| p.to_string()).collect();
        assert!(text.iter().any(|t| t.starts_with("l1d.")), "{text:?}");
        assert!(text.iter().any(|t| t.starts_with("l2.ways")), "{text:?}");
        assert!(
            text.iter().any(|t| t.starts_with("core.rob_entries")),
            "{text:?}"
        );
        let all = c.validate().unwrap_err().to_string();
        assert!(all.contains("problems"), "{all}");
    }
}

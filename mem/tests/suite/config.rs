//! Configuration validation and (de)serialisation.
//!
//! Source: the project brief, DESIGN.md §7: "unknown fields rejected, every
//! invalid value reported at once with its path". Geometry rules are common
//! practice: power-of-two line size and set count, ways dividing the lines.

use overlap_mem::{
    BankConfig, CacheConfig, ConfigProblem, Hierarchy, HierarchyConfig, PrefetchKind, Replacement,
};

fn problems(cfg: &HierarchyConfig) -> Vec<String> {
    let mut out = Vec::new();
    cfg.validate(&mut out);
    out.iter().map(ConfigProblem::to_string).collect()
}

#[test]
fn defaults_are_valid() {
    assert_eq!(problems(&HierarchyConfig::default()), Vec::<String>::new());
    let full = HierarchyConfig {
        l1i: Some(CacheConfig::l1i()),
        l3: Some(CacheConfig::l3()),
        ..HierarchyConfig::default()
    };
    assert!(full.check().is_ok());
    // common practice defaults, as listed in the task statement.
    let d = CacheConfig::default();
    assert_eq!(
        (d.size_bytes, d.ways, d.line_bytes, d.hit_cycles, d.ports),
        (32768, 8, 64, 4, 2)
    );
    assert_eq!((d.mshrs, d.mshr_targets), (8, 4));
    assert_eq!(CacheConfig::l2().hit_cycles, 14);
    assert_eq!(CacheConfig::l3().mshrs, 32);
}

#[test]
fn every_problem_is_listed_with_its_path() {
    let mut cfg = HierarchyConfig::default();
    cfg.l1d.ways = 6;
    cfg.l1d.mshr_targets = 0;
    cfg.l2.line_bytes = 128;
    cfg.l2.hit_cycles = 0;
    cfg.l3 = Some(CacheConfig {
        size_bytes: 48 * 1024,
        ways: 8,
        ..CacheConfig::l3()
    });
    cfg.l1i = Some(CacheConfig {
        ways: 12,
        replacement: Replacement::TreePlru,
        size_bytes: 48 * 1024,
        ..CacheConfig::l1i()
    });
    cfg.dram.transfer_cycles = 0;
    cfg.dram.channels = 0;
    cfg.prefetch.kind = PrefetchKind::Stride;
    cfg.prefetch.degree = 0;
    cfg.prefetch.table_entries = 0;
    let got = problems(&cfg);
    let want = [
        "l1i.ways: must be a power of two of at most 64 for TreePlru, got 12",
        "l1d.ways: must divide the number of lines, got 6",
        "l1d.mshr_targets: must be from 1 to 1024, got 0",
        "l2.hit_cycles: must be at least 1, got 0",
        "l3.size_bytes: must give a power-of-two number of sets, got 96 sets of 8 ways",
        "dram.channels: must be from 1 to 1024, got 0",
        "dram.transfer_cycles: must be at least 1, got 0",
        "prefetch.degree: must be from 1 to 64, got 0",
        "prefetch.table_entries: must be from 1 to 65536, got 0",
        "l2.line_bytes: must equal l1d.line_bytes (64), got 128",
    ];
    assert_eq!(got, want);
    let err = Hierarchy::new(&cfg).expect_err("invalid");
    assert_eq!(err.len(), want.len());
    assert_eq!(err[1].path, "l1d.ways");
}

#[test]
fn geometry_problems() {
    let mut out = Vec::new();
    let bad = CacheConfig {
        line_bytes: 48,
        size_bytes: 0,
        ways: 0,
        ports: 0,
        mshrs: 0,
        ..CacheConfig::l1d()
    };
    bad.validate("x", &mut out);
    let got: Vec<String> = out.iter().map(|p| p.to_string()).collect();
    assert_eq!(
        got,
        [
            "x.line_bytes: must be a power of two from 4 to 4096, got 48",
            "x.size_bytes: must be at least one line, got 0",
            "x.ways: must be at least 1, got 0",
            "x.ports: must be at least 1, got 0",
            "x.mshrs: must be from 1 to 4096, got 0",
        ]
    );
    let mut out = Vec::new();
    CacheConfig {
        size_bytes: 1000,
        ..CacheConfig::l1d()
    }
    .validate("y", &mut out);
    assert_eq!(
        out[0].to_string(),
        "y.size_bytes: must be a multiple of line_bytes (64), got 1000"
    );
}

#[test]
fn dram_bank_problems() {
    let mut cfg = HierarchyConfig::default();
    cfg.dram.banks = Some(BankConfig {
        banks: 0,
        row_bytes: 32,
        ..BankConfig::default()
    });
    assert_eq!(
        problems(&cfg),
        [
            "dram.banks.banks: must be from 1 to 1024, got 0",
            "dram.banks.row_bytes: must be at least one line (64 bytes), got 32",
        ]
    );
}

#[test]
fn ron_round_trip_and_unknown_fields() {
    let cfg = HierarchyConfig {
        l3: Some(CacheConfig::l3()),
        dram: overlap_mem::DramConfig {
            banks: Some(BankConfig::default()),
            ..Default::default()
        },
        ..HierarchyConfig::default()
    };
    let text = ron::ser::to_string_pretty(&cfg, ron::ser::PrettyConfig::default()).unwrap();
    let back: HierarchyConfig = ron::from_str(&text).unwrap();
    assert_eq!(back, cfg);
    let with_typo = text.replacen("hit_cycles", "hit_cycle", 1);
    let err = ron::from_str::<HierarchyConfig>(&with_typo).unwrap_err();
    assert!(err.to_string().contains("hit_cycle"), "{err}");
}

//! One test per kernel: the exit code of the program on the functional model
//! equals the same computation done here in Rust, from an independent
//! re-implementation of the data generation documented by each kernel.
//! Arithmetic is wrapping 64-bit, as in RV64 (Source: RISC-V unprivileged
//! spec, RV64I: integer computational instructions ignore overflow).

use std::fmt::Display;

use crate::util::{Fills, SplitMix64, below, build, ov, run, shuffle, symbol};

/// Builds `name` with `overrides` (any printable values), runs it, and
/// checks its exit code against `expected` computed from the built program.
fn check(
    name: &str,
    overrides: &[(&str, &dyn Display)],
    expected: impl FnOnce(&overlap_workloads::Built) -> u64,
) {
    let built = build(name, overrides);
    let want = expected(&built) as i64;
    let (got, insts) = run(&built);
    assert_eq!(
        got,
        want,
        "{name} {:?}: exit code (after {insts} instructions)",
        ov(overrides)
    );
}

// ---------------------------------------------------------------- chase

#[allow(clippy::too_many_arguments)]
fn chase_model(
    base: u64,
    footprint: u64,
    node: u64,
    k: u64,
    random: bool,
    work: u64,
    hops: u64,
    seed: u64,
) -> u64 {
    let n = footprint / node;
    let m = n / k;
    let used = (m * k) as usize;
    let mut order: Vec<u32> = (0..used as u32).collect();
    if random {
        shuffle(&mut order, &mut SplitMix64(seed));
    }
    let mut next = vec![0u32; used];
    for c in 0..k as usize {
        let chain = &order[c * m as usize..(c + 1) * m as usize];
        for i in 0..chain.len() {
            next[chain[i] as usize] = chain[(i + 1) % chain.len()];
        }
    }
    let mut p: Vec<u32> = (0..k as usize).map(|c| order[c * m as usize]).collect();
    let mut acc = [0u64; 8];
    for _ in 0..(hops / k).max(1) {
        for x in p.iter_mut() {
            *x = next[*x as usize];
        }
        for (c, x) in p.iter().enumerate() {
            let addr = base + u64::from(*x) * node;
            for j in 0..work {
                let a = &mut acc[c % 8];
                *a = if j % 2 == 0 {
                    a.wrapping_add(addr)
                } else {
                    *a ^ 0x2d5
                };
            }
        }
    }
    let mut sum = p
        .iter()
        .fold(0u64, |s, x| s.wrapping_add(u64::from(*x) * node));
    for a in acc {
        sum = sum.wrapping_add(a);
    }
    sum
}

#[test]
fn chase_checksum() {
    check(
        "chase",
        &[("footprint", &"16K"), ("hops", &3000), ("seed", &7)],
        |b| chase_model(symbol(b, "chase_nodes"), 16 << 10, 64, 1, true, 0, 3000, 7),
    );
    check(
        "chase",
        &[
            ("footprint", &20000),
            ("node", &40),
            ("k", &3),
            ("work", &3),
            ("hops", &2000),
        ],
        |b| chase_model(symbol(b, "chase_nodes"), 20000, 40, 3, true, 3, 2000, 1),
    );
    check(
        "chase",
        &[
            ("footprint", &"8K"),
            ("k", &11),
            ("work", &2),
            ("hops", &5000),
            ("layout", &"stride"),
        ],
        |b| chase_model(symbol(b, "chase_nodes"), 8 << 10, 64, 11, false, 2, 5000, 1),
    );
    check(
        "chase",
        &[
            ("footprint", &"4K"),
            ("k", &16),
            ("node", &128),
            ("hops", &1),
        ],
        |b| chase_model(symbol(b, "chase_nodes"), 4 << 10, 128, 16, true, 0, 1, 1),
    );
}

// ---------------------------------------------------------------- listwalk

fn listwalk_model(nodes: u64, payload: u64, random: bool, passes: u64, seed: u64) -> u64 {
    let fill = Fills::new(seed).next_fill();
    let wpn = (8 + payload) / 8;
    let mut order: Vec<u32> = (0..nodes as u32).collect();
    if random {
        shuffle(&mut order, &mut SplitMix64(seed));
    }
    let mut sum = 0u64;
    for _ in 0..passes {
        for &i in &order {
            for w in 0..payload / 8 {
                sum = sum.wrapping_add(fill.word(u64::from(i) * wpn + 1 + w));
            }
            sum = sum.wrapping_add(1);
        }
    }
    sum
}

#[test]
fn listwalk_checksum() {
    check(
        "listwalk",
        &[
            ("nodes", &500),
            ("payload", &24),
            ("passes", &3),
            ("seed", &99),
        ],
        |_| listwalk_model(500, 24, true, 3, 99),
    );
    check(
        "listwalk",
        &[("nodes", &300), ("payload", &0), ("layout", &"stride")],
        |_| listwalk_model(300, 0, false, 4, 1),
    );
}

// ---------------------------------------------------------------- stream

fn fill_bytes(fill: crate::util::Fill, bytes: u64) -> Vec<u8> {
    (0..bytes.div_ceil(8))
        .flat_map(|i| fill.word(i).to_le_bytes())
        .collect()
}

fn stream_model(footprint: u64, elem: u64, unroll: u64, passes: u64, seed: u64) -> u64 {
    let bytes = footprint / (elem * unroll) * elem * unroll;
    let data = fill_bytes(Fills::new(seed).next_fill(), bytes);
    let mut sum = 0u64;
    for _ in 0..passes {
        for e in data[..bytes as usize].chunks(elem as usize) {
            let mut v = [0u8; 8];
            v[..e.len()].copy_from_slice(e);
            sum = sum.wrapping_add(u64::from_le_bytes(v));
        }
    }
    sum
}

/// Checks a kernel with the parameters `footprint`, `elem`, `unroll` and
/// `passes` (`stream`, `fill`) for each case `(footprint, elem, unroll,
/// passes)`, against `model` of the case.
fn check_elem_cases(
    name: &str,
    seed: u64,
    cases: &[(u64, u64, u64, u64)],
    model: impl Fn(u64, u64, u64, u64) -> u64,
) {
    for &(fp, elem, unroll, passes) in cases {
        check(
            name,
            &[
                ("footprint", &fp),
                ("elem", &elem),
                ("unroll", &unroll),
                ("passes", &passes),
                ("seed", &seed),
            ],
            |_| model(fp, elem, unroll, passes),
        );
    }
}

#[test]
fn stream_checksum() {
    check_elem_cases(
        "stream",
        5,
        &[
            (4096, 8, 4, 2),
            (1000, 1, 3, 1),
            (3000, 2, 16, 2),
            (777, 4, 5, 1),
        ],
        |fp, elem, unroll, passes| stream_model(fp, elem, unroll, passes, 5),
    );
}

// ---------------------------------------------------------------- copy, triad

/// The checksum `copy` and `triad` document: every output word `out(i)`
/// written over all passes (the footprint rounded down to whole iterations
/// of `unroll` words), plus the first and the last output word read back.
fn output_words_model(fp: u64, unroll: u64, passes: u64, out: impl Fn(u64) -> u64) -> u64 {
    let words = fp / (8 * unroll) * unroll;
    let mut sum = 0u64;
    for _ in 0..passes {
        for i in 0..words {
            sum = sum.wrapping_add(out(i));
        }
    }
    sum.wrapping_add(out(0)).wrapping_add(out(words - 1))
}

#[test]
fn copy_checksum() {
    let (fp, unroll, passes) = (5000u64, 3u64, 2u64);
    check(
        "copy",
        &[("footprint", &fp), ("unroll", &unroll), ("passes", &passes)],
        |_| {
            let fill = Fills::new(1).next_fill();
            output_words_model(fp, unroll, passes, |i| fill.word(i))
        },
    );
}

#[test]
fn triad_checksum() {
    let (fp, unroll, passes, seed) = (6000u64, 3u64, 2u64, 3u64);
    check(
        "triad",
        &[
            ("footprint", &fp),
            ("unroll", &unroll),
            ("passes", &passes),
            ("seed", &seed),
        ],
        |_| {
            let mut fills = Fills::new(seed);
            let (b, c) = (fills.next_fill(), fills.next_fill());
            output_words_model(fp, unroll, passes, |i| {
                b.word(i).wrapping_add(c.word(i).wrapping_mul(3))
            })
        },
    );
}

// ---------------------------------------------------------------- stride

#[test]
fn stride_checksum() {
    for (fp, stride, loads) in [(8192u64, 64u64, 1000u64), (10_000, 4104, 999), (4096, 8, 3)] {
        check(
            "stride",
            &[("footprint", &fp), ("stride", &stride), ("loads", &loads)],
            |_| {
                let f = fp / 8 * 8;
                let fill = Fills::new(1).next_fill();
                let mut off = 0u64;
                let mut sum = 0u64;
                for _ in 0..(loads / 4).max(1) * 4 {
                    sum = sum.wrapping_add(fill.word(off / 8));
                    off = (off + stride) % f;
                }
                sum
            },
        );
    }
}

// ---------------------------------------------------------------- gather

#[test]
fn gather_checksum() {
    let (fp, count, unroll, seed) = (12_000u64, 1001u64, 3u64, 42u64);
    check(
        "gather",
        &[
            ("footprint", &fp),
            ("count", &count),
            ("unroll", &unroll),
            ("seed", &seed),
        ],
        |_| {
            let words = fp / 8;
            let fill = Fills::new(seed).next_fill();
            let mut rng = SplitMix64(seed);
            let mut sum = 0u64;
            for _ in 0..(count / unroll).max(1) * unroll {
                sum = sum.wrapping_add(fill.word(below(rng.next(), words)));
            }
            sum
        },
    );
}

// ---------------------------------------------------------------- hashprobe

/// Open addressing with linear probing, as documented by the kernel.
/// Returns (checksum, lookups that found their key).
fn hashprobe_model(footprint: u64, load: u64, hit: u64, probes: u64, seed: u64) -> (u64, u64) {
    let slots = footprint / 16;
    let present = slots * load / 100;
    let home = |key: u64| below(key.wrapping_mul(0x9e37_79b9_7f4a_7c15), slots) as usize;
    let records = Fills::new(seed).next_fill();
    let mut table = vec![(0u64, 0u64); slots as usize];
    let mut keys = Vec::new();
    let mut rng = SplitMix64(seed);
    for j in 0..present {
        let key = rng.next() | 1;
        keys.push(key);
        let mut s = home(key);
        while table[s].0 != 0 {
            s = (s + 1) % table.len();
        }
        table[s] = (key, j);
    }
    let mut sum = 0u64;
    let mut found = 0u64;
    for _ in 0..probes {
        let r1 = rng.next();
        let r2 = rng.next();
        let key = if below(r1, 100) < hit {
            keys[below(r2, present) as usize]
        } else {
            (r2 & !1) | 2
        };
        let mut s = home(key);
        loop {
            if table[s].0 == key {
                sum = sum.wrapping_add(records.word(table[s].1));
                found += 1;
                break;
            }
            if table[s].0 == 0 {
                break;
            }
            s = (s + 1) % table.len();
        }
    }
    (sum.wrapping_add(found << 40), found)
}

#[test]
fn hashprobe_checksum() {
    for (fp, load, hit, probes, record) in [
        (4096u64, 50u64, 50u64, 500u64, 64u64),
        (5000, 90, 100, 300, 8),
        (2048, 10, 0, 200, 200),
    ] {
        check(
            "hashprobe",
            &[
                ("footprint", &fp),
                ("load", &load),
                ("hit", &hit),
                ("probes", &probes),
                ("record", &record),
                ("seed", &11),
            ],
            |_| hashprobe_model(fp, load, hit, probes, 11).0,
        );
    }
    // Sanity of the model itself: hit=100 finds every key, hit=0 none.
    assert_eq!(hashprobe_model(4096, 50, 100, 100, 1).1, 100);
    assert_eq!(hashprobe_model(4096, 50, 0, 100, 1).1, 0);
}

// ---------------------------------------------------------------- hitmiss

fn gcd(a: u64, b: u64) -> u64 {
    if b == 0 { a } else { gcd(b, a % b) }
}

fn hitmiss_model(
    footprint: u64,
    spacing: u64,
    misses: u64,
    hits: u64,
    dependent: bool,
    seed: u64,
) -> u64 {
    let g = footprint / spacing;
    let mut s = ((g as f64 * 0.618).round() as u64).clamp(1, (g - 1).max(1));
    while gcd(s, g) != 1 {
        s += 1;
    }
    let mut fills = Fills::new(seed);
    let (far, hot) = (fills.next_fill(), fills.next_fill());
    let (mut a, mut b) = (0u64, 0u64);
    for i in 0..misses {
        let m = far.word(i * s % g);
        a = a.wrapping_add(m);
        let off = if dependent { m & 120 } else { 0 };
        for j in 0..hits {
            b = b.wrapping_add(hot.word((off + 8 * j) / 8));
        }
    }
    a.wrapping_add(b)
}

#[test]
fn hitmiss_checksum() {
    check(
        "hitmiss",
        &[("footprint", &"64K"), ("misses", &3000), ("hits", &5)],
        |_| hitmiss_model(64 << 10, 64, 3000, 5, false, 1),
    );
    check(
        "hitmiss",
        &[
            ("footprint", &10000),
            ("spacing", &72),
            ("misses", &777),
            ("hits", &16),
            ("dependent", &"true"),
        ],
        |_| hitmiss_model(10000, 72, 777, 16, true, 1),
    );
}

// ---------------------------------------------------------------- fill

#[test]
fn fill_checksum() {
    check_elem_cases(
        "fill",
        8,
        &[
            (4096, 8, 4, 3),
            (1001, 1, 7, 2),
            (3000, 2, 3, 1),
            (5000, 4, 16, 2),
        ],
        |fp, elem, unroll, passes| {
            let iters = fp / (elem * unroll);
            let f = Fills::new(8).next_fill();
            let last = f.word(passes - 1);
            let v = if elem == 8 {
                last
            } else {
                last & ((1u64 << (8 * elem)) - 1)
            };
            v.wrapping_mul(2).wrapping_add(iters * unroll * passes)
        },
    );
}

// ---------------------------------------------------------------- branchy

fn branchy_model(taken: u64, count: u64, seed: u64) -> u64 {
    // Source: Marsaglia, "Xorshift RNGs", J. Statistical Software 2003
    // (the 64-bit generator with shifts 13, 7, 17).
    let mut x = Fills::new(seed).raw() | 1;
    let threshold = (taken << 32) / 100;
    let (mut t, mut n) = (0u64, 0u64);
    for _ in 0..count {
        x ^= x << 13;
        x ^= x >> 7;
        x ^= x << 17;
        let h = x >> 32;
        if h < threshold {
            t = t.wrapping_add(h)
        } else {
            n += 1
        }
    }
    t.wrapping_add(n)
}

#[test]
fn branchy_checksum() {
    for taken in [0u64, 13, 50, 100] {
        check(
            "branchy",
            &[("taken", &taken), ("count", &3000), ("seed", &4)],
            |_| branchy_model(taken, 3000, 4),
        );
    }
}

// ---------------------------------------------------------------- alu, divchain

fn alu_model(chains: u64, mul: bool, ops: u64, seed: u64) -> u64 {
    let mut f = Fills::new(seed);
    let mut acc: Vec<u64> = (0..chains).map(|_| f.raw()).collect();
    let (k, l, m) = (f.raw(), f.raw(), f.raw() | 1);
    for _ in 0..(ops / (8 * chains)).max(1) {
        for r in 0..8 {
            for a in acc.iter_mut() {
                *a = if mul {
                    a.wrapping_mul(m)
                } else if r % 2 == 0 {
                    a.wrapping_add(k)
                } else {
                    *a ^ l
                };
            }
        }
    }
    acc.iter().fold(0u64, |s, a| s.wrapping_add(*a))
}

#[test]
fn alu_checksum() {
    for (chains, op, ops) in [
        (1u64, "add", 1000u64),
        (3, "mul", 999),
        (8, "add", 5000),
        (5, "mul", 1),
    ] {
        check(
            "alu",
            &[
                ("chains", &chains),
                ("op", &op),
                ("ops", &ops),
                ("seed", &2),
            ],
            |_| alu_model(chains, op == "mul", ops, 2),
        );
    }
}

#[test]
fn divchain_checksum() {
    for (chains, divs) in [(1u64, 100u64), (3, 500), (4, 1)] {
        check(
            "divchain",
            &[("chains", &chains), ("divs", &divs), ("seed", &6)],
            |_| {
                let mut f = Fills::new(6);
                let n = f.raw() | 1 << 62;
                let mut d: Vec<u64> = (0..chains).map(|_| (f.raw() >> 32) | 1).collect();
                for _ in 0..(divs / (4 * chains)).max(1) * 4 {
                    for x in d.iter_mut() {
                        // Source: RISC-V unprivileged spec, M extension: DIVU is
                        // unsigned division rounding toward zero.
                        *x = n / *x + 3;
                    }
                }
                d.iter().fold(0u64, |s, x| s.wrapping_add(*x))
            },
        );
    }
}

// ---------------------------------------------------------------- matmul

fn matmul_model(n: u64, rows: u64, seed: u64) -> u64 {
    let mut f = Fills::new(seed);
    let (fa, fb) = (f.next_fill(), f.next_fill());
    let rows = if rows == 0 { n } else { rows };
    let mut h = 0u64;
    for i in 0..rows {
        for j in 0..n {
            let mut c = 0u64;
            for k in 0..n {
                c = c.wrapping_add(fa.word(i * n + k).wrapping_mul(fb.word(k * n + j)));
            }
            h = h.wrapping_mul(31).wrapping_add(c);
        }
    }
    h
}

#[test]
fn matmul_checksum() {
    // Tiled and naive orders must give the same C: addition modulo 2^64 is
    // associative and commutative (common practice).
    for (n, rows, tile) in [(7u64, 0u64, 3u64), (12, 5, 4), (16, 0, 16), (9, 9, 2)] {
        for variant in ["naive", "tiled"] {
            check(
                "matmul",
                &[
                    ("n", &n),
                    ("rows", &rows),
                    ("tile", &tile),
                    ("variant", &variant),
                    ("seed", &10),
                ],
                |_| matmul_model(n, rows, 10),
            );
        }
    }
}

// ---------------------------------------------------------------- stencil

fn stencil_model(rows: usize, cols: usize, sweeps: u64, seed: u64) -> u64 {
    let fill = Fills::new(seed).next_fill();
    let init: Vec<u64> = (0..(rows * cols) as u64).map(|i| fill.word(i)).collect();
    let mut grids = [init.clone(), init];
    let mut sum = 0u64;
    for s in 0..sweeps as usize {
        let (src, dst) = if s % 2 == 0 { (0, 1) } else { (1, 0) };
        for i in 1..rows - 1 {
            for j in 1..cols - 1 {
                let g = &grids[src];
                let at = |r: usize, c: usize| g[r * cols + c];
                let v = (at(i, j) << 2)
                    .wrapping_add(at(i, j - 1))
                    .wrapping_add(at(i, j + 1).wrapping_add(at(i - 1, j)))
                    .wrapping_add(at(i + 1, j));
                // Source: RISC-V unprivileged spec, SRAI is an arithmetic shift.
                let v = ((v as i64) >> 3) as u64;
                grids[dst][i * cols + j] = v;
                sum = sum.wrapping_add(v);
            }
        }
    }
    sum
}

#[test]
fn stencil_checksum() {
    for (rows, cols, sweeps) in [(3usize, 3usize, 1u64), (10, 17, 3), (20, 8, 4)] {
        check(
            "stencil",
            &[
                ("rows", &rows),
                ("cols", &cols),
                ("sweeps", &sweeps),
                ("seed", &12),
            ],
            |_| stencil_model(rows, cols, sweeps, 12),
        );
    }
}

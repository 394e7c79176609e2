//! `hitmiss`: every load to a far region (a miss once the region exceeds the
//! cache) is followed by `hits` loads of a small hot array that stays cached:
//! the situation hit-under-miss is built for. With `dependent=true` the hot
//! loads' addresses depend on the missing load's value, so they cannot run
//! under the miss (the control case).
//!
//! Data: the far region `hm_far` is split into `G = footprint / spacing`
//! granules; word 0 of granule `g` holds fill-0 word `g` (see
//! [fills](super#fills)); the rest stays zero (a sparse
//! fill: one store per granule). The hot array `hm_hot` holds 32 words of
//! fill 1.
//!
//! Kernel: `misses` iterations. Iteration `i` loads word 0 of granule
//! `g_i = (i * s) mod G`, where `s` is the integer nearest to `0.618 * G`
//! moved up to the next value coprime with `G` (so every granule is visited
//! once per `G` iterations, in a scattered order), and adds it to sum A.
//! Then it loads hot words `j = 0..hits` at byte offset `8 * j` from the hot
//! array (or, if `dependent`, from the hot array plus `missed & 120`) and
//! adds them to sum B.
//!
//! Checksum: A + B (wrapping).

use crate::asm::{FillSource, emit};
use crate::error::WorkloadError;
use crate::kernels::{MAX_COUNT, footprint_spec, require_multiple, start};
use crate::params::{ParamSpec, Params};

/// Words in the hot array.
pub(crate) const HOT_WORDS: u64 = 32;

const TEMPS: [&str; 7] = ["t2", "t3", "t4", "t5", "a3", "a4", "a5"];

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        footprint_spec(
            "bytes of the far region the missing loads visit",
            4 << 10,
            256 << 10,
        ),
        ParamSpec::int(
            "spacing",
            "bytes between far targets, a multiple of 8 (one line under common practice: 64)",
            8,
            1 << 20,
            64,
        ),
        ParamSpec::int("misses", "far loads (iterations)", 1, MAX_COUNT, 4096),
        ParamSpec::int("hits", "hot loads after each far load", 0, 16, 4),
        ParamSpec::boolean(
            "dependent",
            "hot load addresses depend on the far load's value",
            false,
        ),
    ]
}

/// The visiting step for `granules`: the nearest integer to `0.618 * G`,
/// moved up to the first value coprime with `G`.
pub(crate) fn visit_step(granules: u64) -> u64 {
    let mut s = ((granules as f64) * 0.618).round() as u64;
    s = s.clamp(1, granules.saturating_sub(1).max(1));
    while gcd(s, granules) != 1 {
        s += 1;
    }
    s
}

fn gcd(mut a: u64, mut b: u64) -> u64 {
    while b != 0 {
        (a, b) = (b, a % b);
    }
    a
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let footprint = p.uint("footprint");
    let spacing = require_multiple(p, "spacing", 8)?;
    let granules = footprint / spacing;
    if granules < 2 {
        return Err(p.constraint(
            "spacing",
            format!(
                "must be at most half the footprint ({} bytes), got {spacing}",
                footprint / 2
            ),
        ));
    }
    let misses = p.uint("misses");
    let hits = p.uint("hits");
    let dependent = p.flag("dependent");
    let step = visit_step(granules);
    let span = granules * spacing;

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: {granules} granules of {spacing} bytes ({span} bytes), visiting step {step} granules"
    ));
    a.array("hm_far", span);
    a.array("hm_hot", HOT_WORDS * 8);

    a.comment("---- init: one word per far granule, then the hot array ----");
    let mut fills = FillSource::new(p.uint("seed"));
    a.sparse_fill("hm_far", granules, spacing, fills.next_fill());
    a.fill_array("hm_hot", HOT_WORDS * 8, fills.next_fill());

    a.measure_start();
    emit!(a, "la s0, hm_far");
    emit!(a, "la s1, hm_hot");
    a.li("s2", step * spacing);
    a.li("s3", span);
    a.li("s4", misses);
    a.clear(&["a0", "a1", "a2"]);
    let top = a.fresh("far");
    a.label(&top);
    emit!(a, "add t0, s0, a0");
    emit!(a, "ld t0, 0(t0)");
    emit!(a, "add a1, a1, t0");
    let base = if dependent {
        emit!(a, "andi t1, t0, 120");
        emit!(a, "add t1, s1, t1");
        "t1"
    } else {
        "s1"
    };
    for j in 0..hits {
        let t = TEMPS[j as usize % TEMPS.len()];
        emit!(a, "ld {t}, {}({base})", 8 * j);
        emit!(a, "add a2, a2, {t}");
    }
    a.wrap_add("a0", "s2", "s3", "t6");
    a.count_down("s4", &top);
    emit!(a, "add a1, a1, a2");
    Ok(a.finish("a1"))
}

#[cfg(test)]
mod tests {
    use super::{gcd, visit_step};

    #[test]
    fn step_is_coprime() {
        for g in 2..200 {
            let s = visit_step(g);
            assert!(s >= 1 && s < g.max(2), "g={g} s={s}");
            assert_eq!(gcd(s, g), 1, "g={g} s={s}");
        }
    }
}

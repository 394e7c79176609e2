//! `chase`: pointer chasing over a permutation of nodes, with `k` independent
//! chains walked in lockstep.
//!
//! Data: `n = footprint / node` nodes of `node` bytes; the first 8 bytes of a
//! node hold the address of the next node of its chain. A table `order` of
//! `m * k` 32-bit node indices (`m = n / k` nodes per chain) starts as the
//! identity; for `layout=random` it is shuffled (see
//! [shuffle](super#in-program-randomness); in-program SplitMix64
//! with state `seed`). Chain `c` is the cycle through the nodes
//! `order[c*m] -> order[c*m+1] -> ... -> order[c*m+m-1] -> order[c*m]`. With
//! `layout=stride` chain `c` therefore walks consecutive nodes, a fixed stride
//! of `node` bytes.
//!
//! Kernel: `hops / k` iterations (at least one); each loads the next pointer
//! of every chain (`ld p_c, 0(p_c)`), then runs `work` ALU instructions per
//! chain on accumulator `c % 8`: instruction `j` is `add acc, acc, p_c` for
//! even `j` and `xori acc, acc, 0x2d5` for odd `j`. The work reads the loaded
//! pointer but never feeds an address, so chain `c`'s next address depends
//! only on chain `c`'s previous load.
//!
//! Checksum: the sum of every chain's final `p_c - nodes_base` plus every
//! accumulator (wrapping).

use crate::asm::{Asm, emit};
use crate::error::WorkloadError;
use crate::kernels::{
    MAX_COUNT, footprint_spec, layout_spec, random_layout, require_multiple, start,
};
use crate::params::{ParamSpec, Params};

/// Registers holding the chain pointers, chain `c` in `PTRS[c]`.
const PTRS: [&str; 16] = [
    "a0", "a1", "a2", "a3", "a4", "a5", "a6", "a7", "s2", "s3", "s4", "s5", "s6", "s7", "s8", "s9",
];
/// Registers holding the work accumulators.
const ACCS: [&str; 8] = ["t1", "t2", "t3", "t4", "t5", "t6", "s10", "s11"];

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        footprint_spec(
            "bytes of nodes the chains cover (rounded down to whole nodes)",
            128,
            64 << 10,
        ),
        ParamSpec::int("node", "bytes per node, a multiple of 8", 8, 4096, 64),
        ParamSpec::int("k", "independent chains walked in lockstep", 1, 16, 1),
        layout_spec("node order: random permutation, or stride (consecutive nodes)"),
        ParamSpec::int(
            "work",
            "ALU instructions per hop that use the loaded pointer (off the address path)",
            0,
            64,
            0,
        ),
        ParamSpec::int(
            "hops",
            "loads over all chains (rounded down to a multiple of k, at least k)",
            1,
            MAX_COUNT,
            20_000,
        ),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let footprint = p.uint("footprint");
    let node = require_multiple(p, "node", 8)?;
    let k = p.uint("k");
    let random = random_layout(p);
    let work = p.uint("work");
    let iters = (p.uint("hops") / k).max(1);
    let seed = p.uint("seed");

    let n = footprint / node;
    let m = n / k;
    if m < 2 {
        return Err(p.constraint(
            "footprint",
            format!(
                "{footprint} bytes hold {n} nodes of {node} bytes; k={k} chains need at least {} \
                 (two per chain), so footprint must be at least {}",
                2 * k,
                2 * k * node
            ),
        ));
    }
    let used = m * k;

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: {used} nodes of {node} bytes ({} bytes), {k} chain(s) of {m} nodes, \
         {iters} iterations ({} loads)",
        used * node,
        iters * k
    ));
    a.note(format_args!(
        "data: chase_order (u32 node indices), chase_nodes (the nodes)"
    ));
    a.array("chase_order", used * 4);
    a.array("chase_nodes", used * node);

    a.comment("---- init: node order, then link every chain into a cycle ----");
    a.node_order("chase_order", used, random, seed);
    link_chains(&mut a, node, k, m);

    a.comment("chain heads: p_c = &nodes[order[c * m]]");
    emit!(a, "la t3, chase_order");
    emit!(a, "la t4, chase_nodes");
    a.li("t5", node);
    for (c, ptr) in PTRS.iter().enumerate().take(k as usize) {
        a.offset("t1", "t3", c as u64 * m * 4);
        emit!(a, "lwu t1, 0(t1)");
        emit!(a, "mul t1, t1, t5");
        emit!(a, "add {ptr}, t4, t1");
    }
    let n_accs = if work > 0 {
        (k as usize).min(ACCS.len())
    } else {
        0
    };
    a.clear(&ACCS[..n_accs]);

    a.measure_start();
    a.li("s0", iters);
    let top = a.fresh("hop");
    a.label(&top);
    for ptr in &PTRS[..k as usize] {
        emit!(a, "ld {ptr}, 0({ptr})");
    }
    for (c, ptr) in PTRS.iter().enumerate().take(k as usize) {
        let acc = ACCS[c % ACCS.len()];
        for j in 0..work {
            if j % 2 == 0 {
                emit!(a, "add {acc}, {acc}, {ptr}");
            } else {
                emit!(a, "xori {acc}, {acc}, 0x2d5");
            }
        }
    }
    a.count_down("s0", &top);

    a.comment("checksum: sum of (p_c - nodes) plus the accumulators");
    emit!(a, "la s1, chase_nodes");
    for ptr in &PTRS[..k as usize] {
        emit!(a, "sub t0, {ptr}, s1");
        emit!(a, "add s0, s0, t0");
    }
    a.add_all("s0", &ACCS[..n_accs]);
    Ok(a.finish("s0"))
}

/// Links the nodes: within each chain's slice of `chase_order`, node
/// `order[g]` points to node `order[g + 1]`, and the last back to the first.
fn link_chains(a: &mut Asm, node: u64, k: u64, m: u64) {
    let chain = a.fresh("link_chain");
    a.comment("link: nodes[order[g]].next = &nodes[order[g + 1]], cyclic within each chain");
    emit!(a, "la s0, chase_order");
    emit!(a, "la s1, chase_nodes");
    a.li("s2", node);
    a.li("s3", k);
    emit!(a, "mv s4, s0");
    a.li("s5", m * 4);
    a.label(&chain);
    emit!(a, "mv t0, s4");
    a.link_nodes(m, "a2", "a2");
    emit!(a, "add s4, s4, s5");
    a.count_down("s3", &chain);
}

//! `listwalk`: walks a singly linked list and reads a payload in every node.
//!
//! Data: `nodes` nodes of `8 + payload` bytes in the array `lw_nodes`, first
//! filled with the arithmetic sequence of fill 0 (see
//! [fills](super#fills)), so payload word `w` of node `i`
//! holds fill word `i * (node_bytes / 8) + 1 + w`. A table `lw_order` of node
//! indices starts as the identity and, for `layout=random`, is shuffled with
//! the in-program SplitMix64 (state `seed`). The list is
//! `order[0] -> order[1] -> ... -> order[nodes-1] -> null`: word 0 of each
//! node is overwritten with the next node's address (0 at the tail).
//!
//! Kernel: `passes` walks from the head; at each node, every payload word is
//! loaded and added to a sum, the visit counter is incremented, and the next
//! pointer is loaded.
//!
//! Checksum: payload sum plus number of node visits (wrapping).

use crate::asm::{FillSource, emit, fill_words};
use crate::error::WorkloadError;
use crate::kernels::{MAX_FOOTPRINT, passes_spec, require_multiple, start};
use crate::params::{ParamSpec, Params};

/// Temporaries for the payload loads.
const TEMPS: [&str; 7] = ["t0", "t1", "t2", "t3", "t4", "t5", "t6"];

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        ParamSpec::int("nodes", "nodes in the list", 2, 1 << 24, 1024),
        ParamSpec::int(
            "payload",
            "payload bytes per node after the next pointer, a multiple of 8",
            0,
            248,
            24,
        ),
        ParamSpec::choice(
            "layout",
            "list order in memory: random permutation, or stride (consecutive nodes)",
            &["random", "stride"],
            "random",
        ),
        passes_spec(4),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let nodes = p.uint("nodes");
    let payload = require_multiple(p, "payload", 8)?;
    let random = p.choice("layout") == "random";
    let passes = p.uint("passes");
    let seed = p.uint("seed");
    let node_bytes = 8 + payload;
    let bytes = nodes * node_bytes;
    if bytes > MAX_FOOTPRINT as u64 {
        return Err(p.constraint(
            "nodes",
            format!(
                "{nodes} nodes of {node_bytes} bytes need {bytes} bytes, more than the \
                 {MAX_FOOTPRINT} a workload may use"
            ),
        ));
    }

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: {nodes} nodes of {node_bytes} bytes ({bytes} bytes), {passes} pass(es)"
    ));
    a.note(format_args!(
        "data: lw_order (u32 node indices), lw_nodes (next pointer, then payload)"
    ));
    a.array("lw_order", nodes * 4);
    a.array("lw_nodes", bytes);

    a.comment("---- init: payload fill, node order, links ----");
    let mut fills = FillSource::new(seed);
    a.fill_dwords("lw_nodes", fill_words(bytes), fills.next_fill());
    a.identity_u32("lw_order", nodes);
    if random {
        a.splitmix_setup(seed);
        a.shuffle_u32("lw_order", nodes);
    }
    let link = a.fresh("link");
    a.comment("link: nodes[order[g]].next = &nodes[order[g + 1]], the last one null");
    emit!(a, "la t0, lw_order");
    emit!(a, "la s1, lw_nodes");
    a.li("s2", node_bytes);
    a.li("t6", nodes - 1);
    emit!(a, "lwu a1, 0(t0)");
    emit!(a, "mul a1, a1, s2");
    emit!(a, "add a1, s1, a1");
    emit!(a, "mv s3, a1");
    a.label(&link);
    emit!(a, "lwu t1, 4(t0)");
    emit!(a, "mul t1, t1, s2");
    emit!(a, "add t1, s1, t1");
    emit!(a, "sd t1, 0(a1)");
    emit!(a, "mv a1, t1");
    emit!(a, "addi t0, t0, 4");
    emit!(a, "addi t6, t6, -1");
    emit!(a, "bnez t6, {link}");
    emit!(a, "sd zero, 0(a1)");

    a.measure_start();
    emit!(a, "li s4, 0");
    emit!(a, "li s5, 0");
    a.li("s6", passes);
    let pass = a.fresh("pass");
    let walk = a.fresh("walk");
    a.label(&pass);
    emit!(a, "mv a0, s3");
    a.label(&walk);
    for w in 0..payload / 8 {
        let t = TEMPS[w as usize % TEMPS.len()];
        emit!(a, "ld {t}, {}(a0)", 8 + 8 * w);
        emit!(a, "add s4, s4, {t}");
    }
    emit!(a, "addi s5, s5, 1");
    emit!(a, "ld a0, 0(a0)");
    emit!(a, "bnez a0, {walk}");
    emit!(a, "addi s6, s6, -1");
    emit!(a, "bnez s6, {pass}");
    emit!(a, "add s4, s4, s5");
    a.exit_with("s4");
    Ok(a.finish())
}

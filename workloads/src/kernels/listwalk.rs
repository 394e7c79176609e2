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

use crate::asm::{FillSource, emit};
use crate::error::WorkloadError;
use crate::kernels::{
    MAX_FOOTPRINT, layout_spec, passes_spec, random_layout, require_multiple, start,
};
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
        layout_spec("list order in memory: random permutation, or stride (consecutive nodes)"),
        passes_spec(4),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let nodes = p.uint("nodes");
    let payload = require_multiple(p, "payload", 8)?;
    let random = random_layout(p);
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
    a.fill_array("lw_nodes", bytes, fills.next_fill());
    a.node_order("lw_order", nodes, random, seed);
    a.comment("link: nodes[order[g]].next = &nodes[order[g + 1]], the last one null");
    emit!(a, "la t0, lw_order");
    emit!(a, "la s1, lw_nodes");
    a.li("s2", node_bytes);
    a.link_nodes(nodes, "s3", "zero");

    a.measure_start();
    a.clear(&["s4", "s5"]);
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
    a.count_down("s6", &pass);
    emit!(a, "add s4, s4, s5");
    Ok(a.finish("s4"))
}

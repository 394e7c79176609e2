//! `hashprobe`: lookups in an open-addressing hash table with linear
//! probing, the flow-table probe of a packet-lookup appliance: a lookup that
//! finds its key goes on to read the flow's record. The `hit` knob sets the
//! share of lookups whose key is in the table.
//!
//! Data: the table `hp_table` has `slots = footprint / 16` slots of two
//! words (key, flow index); key 0 marks an empty slot. The flow records
//! `hp_flows` are `record` bytes apart, one per present key; word 0 of
//! record `j` holds fill-0 word `j` (a sparse fill, see
//! [sparse fill](super#fills)). The hash of a key is
//! `mulhu(key * 0x9e3779b97f4a7c15, slots)`, and a probe walks forward slot
//! by slot, wrapping at the end, until it finds the key or an empty slot.
//! With the in-program SplitMix64 (state `seed`), init:
//!
//! 1. inserts `present = slots * load / 100` keys: key `j` is `x | 1` for the
//!    next output `x`, stored in `hp_keys[j]` and in the first empty slot of
//!    its probe sequence with flow index `j`;
//! 2. writes `probes` lookup keys to `hp_lookups`: two outputs `r1, r2` per
//!    lookup; if `mulhu(r1, 100) < hit` the key is `hp_keys[mulhu(r2, present)]`
//!    (a present key, bit 0 set), else `(r2 & !1) | 2` (never present: bit 0
//!    clear, never 0).
//!
//! Kernel: for each lookup key, hash and probe; when found, load the flow
//! index from the slot, then word 0 of that flow's record, add it to a sum
//! and count the hit.
//!
//! Checksum: the record-word sum plus `found << 40` (wrapping).
//!
//! Memory behaviour: a lookup that finds its key reads its record, a second
//! line at a random place in a region as large as the table or larger; a
//! lookup that misses only walks on to the end of its probe cluster, mostly
//! within lines it has already fetched. So raising `hit` adds misses and
//! lowers the L1D hit rate. The lookup-key stream itself is sequential.

use crate::asm::{Asm, FillSource, emit};
use crate::error::WorkloadError;
use crate::kernels::{MAX_FOOTPRINT, footprint_spec, require_multiple, start};
use crate::params::{ParamSpec, Params};
use crate::rng::GOLDEN;

/// Multiplier of the hash function (the golden-ratio constant).
pub(crate) const HASH_MUL: u64 = GOLDEN;

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        footprint_spec(
            "bytes of the table, 16 per slot (rounded down to whole slots)",
            1 << 10,
            64 << 10,
        ),
        ParamSpec::int("load", "percent of slots filled", 10, 90, 50),
        ParamSpec::int(
            "hit",
            "percent of lookups whose key is in the table",
            0,
            100,
            50,
        ),
        ParamSpec::int("probes", "lookups", 1, 1 << 24, 2048),
        ParamSpec::int(
            "record",
            "bytes between flow records (one record per present key), a multiple of 8",
            8,
            4096,
            64,
        ),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let slots = p.uint("footprint") / 16;
    let present = slots * p.uint("load") / 100;
    let hit = p.uint("hit");
    let probes = p.uint("probes");
    let record = require_multiple(p, "record", 8)?;
    let seed = p.uint("seed");
    if present * record > MAX_FOOTPRINT as u64 {
        return Err(p.constraint(
            "record",
            format!(
                "{present} flow records of {record} bytes need {} bytes, more than the \
                 {MAX_FOOTPRINT} a workload may use",
                present * record
            ),
        ));
    }

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: {slots} slots ({} bytes), {present} keys present, {probes} lookups, \
         {hit}% of them for present keys",
        slots * 16
    ));
    a.note(format_args!(
        "data: hp_table (key, flow index), hp_flows ({present} records of {record} bytes), \
         hp_keys (present keys), hp_lookups"
    ));
    a.array("hp_table", slots * 16);
    a.array("hp_flows", present * record);
    a.array("hp_keys", present * 8);
    a.array("hp_lookups", probes * 8);

    a.comment("---- init: flow records ----");
    a.sparse_fill(
        "hp_flows",
        present,
        record,
        FillSource::new(seed).next_fill(),
    );

    a.comment("---- init: insert the present keys ----");
    a.splitmix_setup(seed);
    emit!(a, "la s0, hp_table");
    a.li("s1", slots);
    a.offset("s2", "s0", slots * 16);
    a.li("s3", HASH_MUL);
    emit!(a, "la s4, hp_keys");
    a.li("s5", present);
    emit!(a, "li s6, 0");
    let insert = a.fresh("insert");
    let walk = a.fresh("insert_walk");
    let place = a.fresh("insert_place");
    a.label(&insert);
    a.splitmix_step("a0", "a1");
    emit!(a, "ori a0, a0, 1");
    emit!(a, "slli t0, s6, 3");
    emit!(a, "add t0, s4, t0");
    emit!(a, "sd a0, 0(t0)");
    hash_to_slot(&mut a, "a0", "t1");
    a.label(&walk);
    emit!(a, "ld t2, 0(t1)");
    emit!(a, "beqz t2, {place}");
    next_slot(&mut a, "t1", &walk);
    a.label(&place);
    emit!(a, "sd a0, 0(t1)");
    emit!(a, "sd s6, 8(t1)");
    emit!(a, "addi s6, s6, 1");
    emit!(a, "bltu s6, s5, {insert}");

    a.comment("---- init: the lookup keys ----");
    let gen_top = a.fresh("lookup_key");
    let absent = a.fresh("absent_key");
    let store = a.fresh("store_key");
    a.span("t0", "t3", "hp_lookups", probes * 8);
    a.li("t4", hit);
    emit!(a, "li t5, 100");
    a.label(&gen_top);
    a.splitmix_step("a0", "a1");
    emit!(a, "mulhu a2, a0, t5");
    a.splitmix_step("a0", "a1");
    emit!(a, "bgeu a2, t4, {absent}");
    emit!(a, "mulhu a0, a0, s5");
    emit!(a, "slli a0, a0, 3");
    emit!(a, "add a0, s4, a0");
    emit!(a, "ld a0, 0(a0)");
    emit!(a, "j {store}");
    a.label(&absent);
    emit!(a, "andi a0, a0, -2");
    emit!(a, "ori a0, a0, 2");
    a.label(&store);
    emit!(a, "sd a0, 0(t0)");
    emit!(a, "addi t0, t0, 8");
    emit!(a, "bltu t0, t3, {gen_top}");

    a.measure_start();
    emit!(a, "la s8, hp_flows");
    a.li("s7", record);
    a.span("a3", "a4", "hp_lookups", probes * 8);
    a.clear(&["a5", "a6"]);
    let look = a.fresh("lookup");
    let probe = a.fresh("probe");
    let found = a.fresh("found");
    let next = a.fresh("next");
    a.label(&look);
    emit!(a, "ld a0, 0(a3)");
    hash_to_slot(&mut a, "a0", "t1");
    a.label(&probe);
    emit!(a, "ld t2, 0(t1)");
    emit!(a, "beq t2, a0, {found}");
    emit!(a, "beqz t2, {next}");
    next_slot(&mut a, "t1", &probe);
    a.label(&found);
    emit!(a, "ld t2, 8(t1)");
    emit!(a, "mul t2, t2, s7");
    emit!(a, "add t2, s8, t2");
    emit!(a, "ld t2, 0(t2)");
    emit!(a, "add a5, a5, t2");
    emit!(a, "addi a6, a6, 1");
    a.label(&next);
    emit!(a, "addi a3, a3, 8");
    emit!(a, "bltu a3, a4, {look}");
    emit!(a, "slli a6, a6, 40");
    emit!(a, "add a5, a5, a6");
    Ok(a.finish("a5"))
}

/// `slot = table + 16 * mulhu(key * HASH_MUL, slots)`, with the table in
/// `s0`, the slot count in `s1` and the multiplier in `s3`.
fn hash_to_slot(a: &mut Asm, key: &str, slot: &str) {
    emit!(a, "mul {slot}, {key}, s3");
    emit!(a, "mulhu {slot}, {slot}, s1");
    emit!(a, "slli {slot}, {slot}, 4");
    emit!(a, "add {slot}, s0, {slot}");
}

/// The linear probe's step: moves `slot` to the next slot, wrapping from the
/// table's end (`s2`) to its start (`s0`), and jumps back to `top`.
fn next_slot(a: &mut Asm, slot: &str, top: &str) {
    emit!(a, "addi {slot}, {slot}, 16");
    emit!(a, "bltu {slot}, s2, {top}");
    emit!(a, "mv {slot}, s0");
    emit!(a, "j {top}");
}

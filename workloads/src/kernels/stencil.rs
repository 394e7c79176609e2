//! `stencil`: five-point stencil sweeps over a 2-D grid of 64-bit integers,
//! ping-ponging between two grids.
//!
//! Data: grids `st_g0` and `st_g1`, `rows x cols` words each, row-major, both
//! filled with the same fill 0 (see [fills](super#fills)),
//! so their border cells agree and never change.
//!
//! Kernel: `sweeps` sweeps; sweep `s` reads grid `s % 2` and writes the
//! other. Every interior cell gets
//! `out[i][j] = (4 * c + in[i-1][j] + in[i+1][j] + in[i][j-1] + in[i][j+1]) >> 3`
//! (wrapping adds, arithmetic shift), with `c = in[i][j]`; each value
//! written is also added to a sum.
//!
//! Checksum: the sum of every value written (wrapping).

use crate::asm::{FillSource, emit};
use crate::error::WorkloadError;
use crate::kernels::{passes_spec, start};
use crate::params::{ParamSpec, Params};

pub(crate) fn params() -> Vec<ParamSpec> {
    let mut sweeps = passes_spec(4);
    sweeps.name = "sweeps";
    sweeps.description = "sweeps over the grid";
    vec![
        ParamSpec::int("rows", "grid rows (two are border)", 3, 4096, 32),
        ParamSpec::int("cols", "grid columns (two are border)", 3, 4096, 32),
        sweeps,
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let rows = p.uint("rows");
    let cols = p.uint("cols");
    let sweeps = p.uint("sweeps");
    let row_bytes = cols * 8;
    let bytes = rows * row_bytes;

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: two grids of {bytes} bytes, {} interior cells per sweep",
        (rows - 2) * (cols - 2)
    ));
    a.array("st_g0", bytes);
    a.array("st_g1", bytes);
    a.comment("---- init: both grids get the same fill ----");
    let fill = FillSource::new(p.uint("seed")).next_fill();
    a.fill_array("st_g0", bytes, fill);
    a.fill_array("st_g1", bytes, fill);

    a.measure_start();
    emit!(a, "la s0, st_g0");
    emit!(a, "la s1, st_g1");
    a.li("s2", row_bytes);
    a.li("s3", sweeps);
    emit!(a, "li a7, 0");
    let sweep = a.fresh("sweep");
    let row = a.fresh("row");
    let cell = a.fresh("cell");
    a.label(&sweep);
    emit!(a, "add a0, s0, s2");
    emit!(a, "add a1, s1, s2");
    a.li("s4", rows - 2);
    a.label(&row);
    emit!(a, "addi a2, a0, 8");
    emit!(a, "addi a3, a1, 8");
    emit!(a, "add a4, a0, s2");
    emit!(a, "addi a4, a4, -8");
    emit!(a, "sub a5, a2, s2");
    emit!(a, "add a6, a2, s2");
    a.label(&cell);
    emit!(a, "ld t0, 0(a2)");
    emit!(a, "ld t1, -8(a2)");
    emit!(a, "ld t2, 8(a2)");
    emit!(a, "ld t3, 0(a5)");
    emit!(a, "ld t4, 0(a6)");
    emit!(a, "slli t0, t0, 2");
    emit!(a, "add t0, t0, t1");
    emit!(a, "add t2, t2, t3");
    emit!(a, "add t0, t0, t4");
    emit!(a, "add t0, t0, t2");
    emit!(a, "srai t0, t0, 3");
    emit!(a, "sd t0, 0(a3)");
    emit!(a, "add a7, a7, t0");
    emit!(a, "addi a2, a2, 8");
    emit!(a, "addi a3, a3, 8");
    emit!(a, "addi a5, a5, 8");
    emit!(a, "addi a6, a6, 8");
    emit!(a, "bltu a2, a4, {cell}");
    emit!(a, "add a0, a0, s2");
    emit!(a, "add a1, a1, s2");
    a.count_down("s4", &row);
    emit!(a, "mv t0, s0");
    emit!(a, "mv s0, s1");
    emit!(a, "mv s1, t0");
    a.count_down("s3", &sweep);
    Ok(a.finish("a7"))
}

//! `matmul`: `C = A * B` for `n x n` matrices of 64-bit integers (wrapping
//! arithmetic), computing the first `rows` rows of `C` (all when `rows=0`).
//!
//! Data: row-major `mm_a` (fill 0), `mm_b` (fill 1), see
//! [fills](super#fills); `mm_c` starts zero.
//!
//! Kernel, `variant=naive`: for each row `i` and column `j`, the dot product
//! of row `i` of A and column `j` of B (`B` walked down a column, a stride
//! of `8 n` bytes), stored to `C[i][j]`.
//!
//! Kernel, `variant=tiled`: blocked i-k-j order with `tile x tile` blocks:
//! for each block `(ii, kk, jj)` in that nesting order, for `i` in the
//! block's rows and `k` in its columns of A, `C[i][j] += A[i][k] * B[k][j]`
//! for `j` in the block's columns (B and C walked along rows). Edge blocks
//! are cut at `rows` and `n`.
//!
//! Checksum: `h = h * 31 + C[i][j]` over the computed rows of C in row-major
//! order, starting from 0 (wrapping), read after the multiply.

use crate::asm::{Asm, emit};
use crate::error::WorkloadError;
use crate::kernels::start;
use crate::params::{ParamSpec, Params};

pub(crate) fn params() -> Vec<ParamSpec> {
    vec![
        ParamSpec::int(
            "n",
            "matrix dimension (elements per row and column)",
            2,
            1024,
            24,
        ),
        ParamSpec::choice(
            "variant",
            "loop order: naive i-j-k, or tiled (blocked i-k-j)",
            &["naive", "tiled"],
            "naive",
        ),
        ParamSpec::int(
            "tile",
            "block edge for variant=tiled, in elements",
            2,
            256,
            8,
        ),
        ParamSpec::int(
            "rows",
            "rows of C computed, at most n (0 = all)",
            0,
            1024,
            0,
        ),
    ]
}

pub(crate) fn generate(p: &Params, description: &'static str) -> Result<String, WorkloadError> {
    let n = p.uint("n");
    let tiled = p.choice("variant") == "tiled";
    let tile = p.uint("tile");
    let rows = match p.uint("rows") {
        0 => n,
        r if r > n => {
            return Err(p.constraint(
                "rows",
                format!("must be at most n = {n} (or 0 for all), got {r}"),
            ));
        }
        r => r,
    };
    let row_bytes = n * 8;
    let bytes = n * row_bytes;

    let mut a = start(p, description);
    a.note(format_args!(
        "derived: three {n}x{n} matrices of {bytes} bytes each, {rows} row(s) of C, \
         {} multiply-adds",
        rows * n * n
    ));
    let arrays = ["mm_a", "mm_b", "mm_c"];
    a.filled_arrays(bytes, &arrays, &arrays[..2], p.uint("seed"));

    a.measure_start();
    emit!(a, "la s0, mm_a");
    emit!(a, "la s1, mm_b");
    emit!(a, "la s2, mm_c");
    a.li("s3", row_bytes);
    if tiled {
        tiled_kernel(&mut a, n, rows, tile);
    } else {
        naive_kernel(&mut a, rows * row_bytes);
    }

    a.comment("checksum: h = h * 31 + C[i][j] over the computed rows");
    let sum = a.fresh("checksum");
    emit!(a, "mv t0, s2");
    a.offset("t1", "t0", rows * row_bytes);
    emit!(a, "li a0, 0");
    a.label(&sum);
    emit!(a, "ld t2, 0(t0)");
    emit!(a, "slli t3, a0, 5");
    emit!(a, "sub a0, t3, a0");
    emit!(a, "add a0, a0, t2");
    emit!(a, "addi t0, t0, 8");
    emit!(a, "bltu t0, t1, {sum}");
    Ok(a.finish("a0"))
}

/// i-j-k with the dot product in a register. A in `s0`, B in `s1`, C in
/// `s2`, row bytes in `s3`.
fn naive_kernel(a: &mut Asm, a_rows_bytes: u64) {
    let row = a.fresh("row");
    let col = a.fresh("col");
    let dot = a.fresh("dot");
    emit!(a, "mv s4, s0");
    emit!(a, "mv s5, s2");
    a.li("t0", a_rows_bytes);
    emit!(a, "add s6, s0, t0");
    a.label(&row);
    emit!(a, "li s7, 0");
    a.label(&col);
    emit!(a, "mv a0, s4");
    emit!(a, "add a1, s1, s7");
    emit!(a, "add a2, s4, s3");
    emit!(a, "li a3, 0");
    a.label(&dot);
    emit!(a, "ld t0, 0(a0)");
    emit!(a, "ld t1, 0(a1)");
    emit!(a, "mul t0, t0, t1");
    emit!(a, "add a3, a3, t0");
    emit!(a, "addi a0, a0, 8");
    emit!(a, "add a1, a1, s3");
    emit!(a, "bltu a0, a2, {dot}");
    emit!(a, "sd a3, 0(s5)");
    emit!(a, "addi s5, s5, 8");
    emit!(a, "addi s7, s7, 8");
    emit!(a, "bltu s7, s3, {col}");
    emit!(a, "add s4, s4, s3");
    emit!(a, "bltu s4, s6, {row}");
}

/// `dst = min(dst, limit)` (unsigned).
fn clamp_to(a: &mut Asm, dst: &str, limit: &str) {
    let ok = a.fresh("in_bounds");
    emit!(a, "bltu {dst}, {limit}, {ok}");
    emit!(a, "mv {dst}, {limit}");
    a.label(&ok);
}

/// Blocked i-k-j. Registers: `s4`/`s5` row block [ii, ie), `s6`/`s7` k block
/// [kk, ke), `s8`/`s9` column block in bytes [jj, je), `ra` = n, `tp` = tile,
/// `gp` = tile * 8, `s11` = rows.
fn tiled_kernel(a: &mut Asm, n: u64, rows: u64, tile: u64) {
    let ii_loop = a.fresh("ii");
    let kk_loop = a.fresh("kk");
    let jj_loop = a.fresh("jj");
    let i_loop = a.fresh("i");
    let k_loop = a.fresh("k");
    let j_loop = a.fresh("j");
    a.li("ra", n);
    a.li("tp", tile);
    a.li("gp", tile * 8);
    a.li("s11", rows);
    emit!(a, "li s4, 0");
    a.label(&ii_loop);
    emit!(a, "add s5, s4, tp");
    clamp_to(a, "s5", "s11");
    emit!(a, "li s6, 0");
    a.label(&kk_loop);
    emit!(a, "add s7, s6, tp");
    clamp_to(a, "s7", "ra");
    emit!(a, "li s8, 0");
    a.label(&jj_loop);
    emit!(a, "add s9, s8, gp");
    clamp_to(a, "s9", "s3");
    emit!(a, "mv a0, s4");
    a.label(&i_loop);
    emit!(a, "mul a1, a0, s3");
    emit!(a, "add a2, s0, a1");
    emit!(a, "add a1, s2, a1");
    emit!(a, "mv a3, s6");
    a.label(&k_loop);
    emit!(a, "slli t0, a3, 3");
    emit!(a, "add t0, a2, t0");
    emit!(a, "ld t0, 0(t0)");
    emit!(a, "mul t1, a3, s3");
    emit!(a, "add t1, s1, t1");
    emit!(a, "add t1, t1, s8");
    emit!(a, "add a4, a1, s8");
    emit!(a, "add a5, a1, s9");
    a.label(&j_loop);
    emit!(a, "ld t2, 0(a4)");
    emit!(a, "ld t3, 0(t1)");
    emit!(a, "mul t3, t3, t0");
    emit!(a, "add t2, t2, t3");
    emit!(a, "sd t2, 0(a4)");
    emit!(a, "addi a4, a4, 8");
    emit!(a, "addi t1, t1, 8");
    emit!(a, "bltu a4, a5, {j_loop}");
    emit!(a, "addi a3, a3, 1");
    emit!(a, "bltu a3, s7, {k_loop}");
    emit!(a, "addi a0, a0, 1");
    emit!(a, "bltu a0, s5, {i_loop}");
    emit!(a, "mv s8, s9");
    emit!(a, "bltu s8, s3, {jj_loop}");
    emit!(a, "mv s6, s7");
    emit!(a, "bltu s6, ra, {kk_loop}");
    emit!(a, "mv s4, s5");
    emit!(a, "bltu s4, s11, {ii_loop}");
}

#!/usr/bin/env bash
# Builds the C kernels as static RV64 executables, twice: -march=rv64im and
# -march=rv64imc (compressed instructions).
#
#   workloads/c/build.sh [OUT_DIR]     kernels into OUT_DIR (default workloads/c/build)
#   workloads/c/build.sh --fixtures    kernels and the loader's bad-file fixtures
#                                      into tests/data/elf, and the expected
#                                      output of each kernel recorded with the
#                                      reference emulator qemu-riscv64
#
# Outputs are named KERNEL.rv64im.elf and KERNEL.rv64imc.elf.
# Needs riscv64-linux-gnu-gcc (Debian: gcc-riscv64-linux-gnu) and, for
# --fixtures, qemu-riscv64 (Debian: qemu-user); CROSS and QEMU override the
# tool names.
set -euo pipefail

here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../.." && pwd)"
CROSS="${CROSS:-riscv64-linux-gnu-}"
QEMU="${QEMU:-qemu-riscv64}"
CC="${CROSS}gcc"

KERNELS="route_chase flow_probe classify_matmul size_histogram"
MARCHES="rv64im rv64imc"

# -static -no-pie: an ET_EXEC file with no interpreter. -nostdlib
# -nostartfiles: start.S is the entry and there is no libc; libgcc cannot be
# linked either (the installed one is built for lp64d), so kernels avoid
# operations that would call it (floating point, 128-bit division).
CFLAGS="-O2 -mabi=lp64 -ffreestanding -Wall -Wextra -Werror"
LDFLAGS="-nostdlib -nostartfiles -static -no-pie -Wl,--build-id=none"
# The memory routines must not be compiled into calls to themselves.
MEMFLAGS="-fno-builtin -fno-tree-loop-distribute-patterns"

fixtures=0
out="$here/build"
case "${1:-}" in
  --fixtures) fixtures=1; out="$root/tests/data/elf" ;;
  -h|--help) sed -n '2,15p' "$0"; exit 0 ;;
  "") ;;
  *) out="$1" ;;
esac
mkdir -p "$out"
out="$(cd "$out" && pwd)"
objs="$(mktemp -d)"
trap 'rm -rf "$objs"' EXIT

# build_kernel NAME MARCH: compile the kit and NAME.c, link OUT/NAME.MARCH.elf.
build_kernel() {
  local name="$1" march="$2" o="$objs/$2"
  mkdir -p "$o"
  "$CC" $CFLAGS -march="$march" -c "$here/start.S" -o "$o/start.o"
  "$CC" $CFLAGS $MEMFLAGS -march="$march" -c "$here/mem.c" -o "$o/mem.o"
  "$CC" $CFLAGS -march="$march" -c "$here/print.c" -o "$o/print.o"
  "$CC" $CFLAGS -march="$march" -c "$here/$name.c" -o "$o/$name.o"
  "$CC" $LDFLAGS -march="$march" -mabi=lp64 -o "$out/$name.$march.elf" \
    "$o/start.o" "$o/$name.o" "$o/print.o" "$o/mem.o"
}

for k in $KERNELS; do
  for m in $MARCHES; do
    build_kernel "$k" "$m"
  done
done

if [ "$fixtures" = 0 ]; then
  echo "built $(echo $KERNELS | wc -w) kernels x {$MARCHES} into $out"
  exit 0
fi

# --- Bad-file fixtures for the loader's error tests. ---
bad="$here/bad"
# 32-bit RISC-V: assemble as RV32 and link with the 32-bit emulation.
"$CC" -march=rv32i -mabi=ilp32 -c "$bad/exit.S" -o "$objs/exit32.o"
"${CROSS}ld" -m elf32lriscv -s -o "$out/bad_rv32.elf" "$objs/exit32.o"
# Dynamically linked: the compiler's default (PIE, glibc, lp64d).
"$CC" -O2 -s -o "$out/bad_dynamic.elf" "$bad/hello_dynamic.c"
# Static but position-independent (ET_DYN).
"$CC" -march=rv64im -mabi=lp64 -nostdlib -static-pie -Wl,--no-dynamic-linker -s -o "$out/bad_static_pie.elf" "$bad/exit.S"
# The double-float ABI, with the kit (all objects must share the ABI).
fo="$objs/lp64d"
mkdir -p "$fo"
for src in start.S print.c mem.c; do
  "$CC" -O2 -march=rv64imafd -mabi=lp64d -ffreestanding $MEMFLAGS -c "$here/$src" -o "$fo/$src.o"
done
"$CC" -O2 -march=rv64imafd -mabi=lp64d -ffreestanding -c "$bad/float_abi.c" -o "$fo/float_abi.o"
"$CC" $LDFLAGS -march=rv64imafd -mabi=lp64d -s -o "$out/bad_float_abi.elf" "$fo"/*.o
# Another machine: x86-64, with the host's assembler and linker.
if command -v as >/dev/null && command -v ld >/dev/null && [ "$(uname -m)" = x86_64 ]; then
  as --64 -o "$objs/exit_x86_64.o" "$bad/exit_x86_64.S"
  ld -static -s -n -o "$out/bad_x86_64.elf" "$objs/exit_x86_64.o"
else
  echo "note: no x86-64 host assembler; keeping the committed bad_x86_64.elf" >&2
fi

# --- Expected output, recorded with the reference emulator. ---
qemu_version="$("$QEMU" --version | head -n 1)"
for k in $KERNELS; do
  first=""
  for m in $MARCHES; do
    set +e
    "$QEMU" "$out/$k.$m.elf" > "$objs/stdout.$m"
    code=$?
    set -e
    printf 'exit %s\n' "$code" > "$objs/result.$m"
    cat "$objs/stdout.$m" >> "$objs/result.$m"
    if [ -z "$first" ]; then
      first="$m"
    elif ! cmp -s "$objs/result.$first" "$objs/result.$m"; then
      echo "error: $k: the $first and $m builds disagree under $QEMU" >&2
      exit 1
    fi
  done
  {
    echo "# Reference: $qemu_version, running $k.rv64im.elf and"
    echo "# $k.rv64imc.elf (they agree). Written by workloads/c/build.sh --fixtures."
    echo "# Format: comment lines, then 'exit CODE', then the program's stdout verbatim."
    cat "$objs/result.$first"
  } > "$out/$k.expected"
  echo "$k: $(head -n 1 "$objs/result.$first"), $(tail -n 1 "$objs/stdout.$first")"
done

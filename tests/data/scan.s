# scan.s — a small test program for the command-line tests: two independent
# streams of loads over a 32 KiB table, one load per 64-byte line, so every
# load misses a cold cache and the two streams' misses can overlap. Prints one
# line, then exits with the sum of the loaded words (all zero: 0).

    .data
banner:
    .ascii  "scan done\n"
    .equ    banner_len, 10

    .balign 64
table:
    .zero   32768

    .text
    .globl  _start
_start:
    la      s0, table               # first stream: the lower half
    li      t2, 16384
    add     s3, s0, t2              # second stream: the upper half
    li      s1, 128                 # lines per stream
    li      s2, 0                   # sum
measure_start:
1:
    ld      t0, 0(s0)
    ld      t1, 0(s3)
    add     s2, s2, t0
    add     s2, s2, t1
    addi    s0, s0, 64
    addi    s3, s3, 64
    addi    s1, s1, -1
    bnez    s1, 1b

    li      a0, 1                   # stdout
    la      a1, banner
    li      a2, banner_len
    li      a7, 64                  # write
    ecall
    mv      a0, s2
    li      a7, 93                  # exit
    ecall

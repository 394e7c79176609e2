# hello.s — the boot banner of a packet-lookup appliance's control core.
#
# Prints one line with the write system call (a7 = 64: fd in a0, buffer in
# a1, length in a2), then exits with status 0 (a7 = 93).
#
# The data comes first so that the banner's length is a constant the
# assembler already knows when it reaches the `li a2, banner_len` below.

    .data
banner:
    .ascii  "lookup engine: 4 tables loaded, "
    .asciz  "ready\n"
    .equ    banner_len, . - banner - 1      # without the trailing NUL

    .equ    STDOUT, 1
    .equ    SYS_WRITE, 64
    .equ    SYS_EXIT, 93

    .text
    .globl  _start
_start:
    li      a0, STDOUT
    la      a1, banner
    li      a2, banner_len
    li      a7, SYS_WRITE
    ecall

    li      a0, 0
    li      a7, SYS_EXIT
    ecall

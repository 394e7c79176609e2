# checksum.s — integrity check of a flow-key table, as the lookup appliance
# runs it after loading a table from flash.
#
# For every 64-bit key k of the table, in order:
#     h = rotate_left(h, 13) xor k
#     h = h * 0x100000001b3          (a 64-bit multiplicative mix)
# starting from h = 0xcbf29ce484222325. The final h is the exit code.

    .equ    SYS_EXIT, 93

    .rodata
    .balign 8
keys:
    .dword  0x0a000001c0a80001, 0x0a000002c0a80002, 0x0a000003c0a80003
    .dword  0x0a0000ffc0a800fe, 0xac100001ac100002, 0xac100003ac100004
    .dword  0x0000000000000000, 0xffffffffffffffff, 0x8000000000000000
    .dword  0x7fffffffffffffff, 0x0123456789abcdef, 0xfedcba9876543210
    .dword  0x00000050000001bb, 0x0000003500000016, 0x000000190000006e
    .dword  -1 - 41, 'k' << 56 | 'e' << 48 | 'y' << 40, keys_end - keys
keys_end:

    .text
_start:
    la      s0, keys                # cursor
    la      s1, keys_end            # end of the table
    li      s2, 0xcbf29ce484222325  # running checksum
    li      s3, 0x100000001b3       # mix multiplier
1:
    bgeu    s0, s1, 2f
    ld      t0, 0(s0)
    slli    t1, s2, 13              # rotate left by 13
    srli    t2, s2, 64 - 13
    or      s2, t1, t2
    xor     s2, s2, t0
    mul     s2, s2, s3
    addi    s0, s0, 8
    j       1b
2:
    mv      a0, s2
    li      a7, SYS_EXIT
    ecall

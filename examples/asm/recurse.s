# recurse.s — deep call chains for the return-address stack of the lookup
# appliance's control core: a naive recursive Fibonacci and the Ackermann
# function, both through call/ret with frames on the stack.
#
# Exit code: fib(FIB_N) << 16 | ackermann(ACK_M, ACK_N).

    .equ    FIB_N, 20
    .equ    ACK_M, 2
    .equ    ACK_N, 3
    .equ    SYS_EXIT, 93

    .text
_start:
    li      a0, FIB_N
    call    fib
    mv      s0, a0
    li      a0, ACK_M
    li      a1, ACK_N
    call    ack
    slli    s0, s0, 16
    or      a0, s0, a0
    li      a7, SYS_EXIT
    ecall

# fib(a0 = n) -> a0: fib(0) = 0, fib(1) = 1, fib(n) = fib(n-1) + fib(n-2)
fib:
    li      t0, 2
    blt     a0, t0, 1f              # n < 2: fib(n) = n
    addi    sp, sp, -32
    sd      ra, 24(sp)
    sd      s0, 16(sp)
    sd      s1, 8(sp)
    mv      s0, a0
    addi    a0, s0, -1
    call    fib
    mv      s1, a0
    addi    a0, s0, -2
    call    fib
    add     a0, a0, s1
    ld      ra, 24(sp)
    ld      s0, 16(sp)
    ld      s1, 8(sp)
    addi    sp, sp, 32
1:
    ret

# ack(a0 = m, a1 = n) -> a0
#   ack(0, n) = n + 1
#   ack(m, 0) = ack(m - 1, 1)
#   ack(m, n) = ack(m - 1, ack(m, n - 1))
ack:
    bnez    a0, 1f
    addi    a0, a1, 1
    ret
1:
    addi    sp, sp, -16
    sd      ra, 8(sp)
    sd      s0, 0(sp)
    mv      s0, a0
    bnez    a1, 2f
    addi    a0, s0, -1
    li      a1, 1
    call    ack
    j       3f
2:
    addi    a1, a1, -1
    call    ack                     # a0 = ack(m, n - 1)
    mv      a1, a0
    addi    a0, s0, -1
    call    ack
3:
    ld      ra, 8(sp)
    ld      s0, 0(sp)
    addi    sp, sp, 16
    ret

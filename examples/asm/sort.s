# sort.s — orders the priority table of a packet classifier (smallest
# priority value first) with an insertion sort, in place.
#
# Exit code: sum over i of (i + 1) * table[i] after sorting, a checksum that
# depends on the order of the elements, not just on which ones are there.

    .equ    SYS_EXIT, 93

    .data
    .balign 8
table:
    .dword  907, -12, 4410, 3, 3, 77, -5000, 12345678901, 0, 42
    .dword  615, 616, -615, 9, 1 << 40, -(1 << 40), 250, 249, 251, 8
    .dword  0x7fffffffffffffff, -0x8000000000000000, 1000, 999, 1001, 17, -17, 64, 65, 63
    .dword  31337, 2718, 3141, -1, 1, 5, 55, 555, 5555, 55555
table_end:
    .equ    TABLE_BYTES, table_end - table

    .text
_start:
    la      a0, table
    li      a1, TABLE_BYTES / 8
    call    insertion_sort

    # checksum = sum (i + 1) * table[i]
    la      t0, table
    li      t1, 0                   # i
    li      a0, 0
    li      t3, TABLE_BYTES / 8
1:
    bge     t1, t3, 2f
    ld      t2, (t0)
    addi    t1, t1, 1
    mul     t2, t2, t1
    add     a0, a0, t2
    addi    t0, t0, 8
    j       1b
2:
    li      a7, SYS_EXIT
    ecall

# insertion_sort(a0 = base of signed 64-bit values, a1 = count)
insertion_sort:
    li      t0, 1                   # i
.Louter:
    bge     t0, a1, .Ldone
    slli    t1, t0, 3
    add     t1, a0, t1              # &a[i]
    ld      t2, 0(t1)               # key
    mv      t3, t1                  # hole
.Linner:
    beq     t3, a0, .Lplace         # hole at the front
    ld      t4, -8(t3)
    ble     t4, t2, .Lplace         # a[hole-1] <= key: stop
    sd      t4, 0(t3)               # shift right
    addi    t3, t3, -8
    j       .Linner
.Lplace:
    sd      t2, 0(t3)
    addi    t0, t0, 1
    j       .Louter
.Ldone:
    ret

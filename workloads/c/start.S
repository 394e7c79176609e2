/* Program entry for the C kernel kit.
 *
 * The loader (overlap's functional model, or the Linux kernel under
 * qemu-riscv64) has already pointed sp at a 16-byte aligned stack: keep it.
 * Set gp for linker relaxation of small-data accesses, call main, flush the
 * print buffer, and exit with main's return value (system call 93, exit).
 *
 * Use lla, not la: the compiler and assembler default to position-independent
 * code, where la reads the address from the GOT.
 */
	.section .text.start, "ax", @progbits
	.globl _start
	.type _start, @function
_start:
	.option push
	.option norelax
	lla	gp, __global_pointer$
	.option pop
	andi	sp, sp, -16
	call	main
	mv	s0, a0
	call	print_flush
	mv	a0, s0
	li	a7, 93
	ecall
1:	j	1b
	.size _start, . - _start

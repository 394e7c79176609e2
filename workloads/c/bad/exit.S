/* The smallest RISC-V program: exit(0). Assembled as RV32 and with the
 * double-float ABI to make the loader's bad-file fixtures. */
	.text
	.globl _start
_start:
	li	a0, 0
	li	a7, 93
	ecall

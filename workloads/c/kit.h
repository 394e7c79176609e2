/* The C kernel kit: freestanding helpers for overlap's RV64 kernels.
 *
 * Nothing here uses libc or libgcc: system calls go straight through ECALL
 * (64 write, 93 exit), memory routines live in mem.c, output in print.c.
 */
#ifndef OVERLAP_KIT_H
#define OVERLAP_KIT_H

#include <stddef.h>
#include <stdint.h>

/* Linux RISC-V system call numbers (asm-generic/unistd.h). */
#define SYS_WRITE 64
#define SYS_EXIT 93

static inline long sys_write(int fd, const void *buf, unsigned long len)
{
	register long a0 __asm__("a0") = fd;
	register long a1 __asm__("a1") = (long)buf;
	register long a2 __asm__("a2") = (long)len;
	register long a7 __asm__("a7") = SYS_WRITE;
	__asm__ volatile("ecall" : "+r"(a0) : "r"(a1), "r"(a2), "r"(a7) : "memory");
	return a0;
}

static inline __attribute__((noreturn)) void sys_exit(int code)
{
	register long a0 __asm__("a0") = code;
	register long a7 __asm__("a7") = SYS_EXIT;
	__asm__ volatile("ecall" : : "r"(a0), "r"(a7) : "memory");
	__builtin_unreachable();
}

/* mem.c */
void *memset(void *dst, int c, size_t n);
void *memcpy(void *dst, const void *src, size_t n);
void *memmove(void *dst, const void *src, size_t n);
int memcmp(const void *a, const void *b, size_t n);

/* print.c: buffered output to stdout, flushed at '\n', when full, by
 * print_flush, and by start.S after main returns. */
void print_char(char c);
void print_str(const char *s);
void print_u64(uint64_t v);
void print_i64(int64_t v);
void print_hex(uint64_t v); /* 0x prefix, no leading zeros */
void print_flush(void);

/* Marks the start of the region of interest: overlap measures from the first
 * retirement of the instruction at the global label `measure_start` (the
 * set-up before it runs, warming the caches, but is left out of the report).
 * Use it once, in main, outside any loop. */
#define KIT_MEASURE_START() \
	__asm__ volatile(".globl measure_start\nmeasure_start:" ::: "memory")

/* splitmix64: a seeded generator, so every run is the same. */
static inline uint64_t kit_rand(uint64_t *state)
{
	uint64_t z = (*state += 0x9e3779b97f4a7c15ull);
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
	z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
	return z ^ (z >> 31);
}

/* A uniform value in [0, n): the high half of a 64 x 64-bit product (one
 * mulhu), so that drawing numbers costs no division. */
static inline uint64_t kit_below(uint64_t *state, uint64_t n)
{
	return (uint64_t)(((unsigned __int128)kit_rand(state) * n) >> 64);
}

/* Folds a 64-bit checksum into an exit code, 0..255. */
static inline int kit_exit_code(uint64_t sum)
{
	sum ^= sum >> 32;
	sum ^= sum >> 16;
	sum ^= sum >> 8;
	return (int)(sum & 0xff);
}

#endif

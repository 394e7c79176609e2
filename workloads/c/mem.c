/* Freestanding memory routines. The compiler may emit calls to these for
 * struct copies and array initialisation, so they must exist; build this
 * file with -ffreestanding -fno-builtin -fno-tree-loop-distribute-patterns,
 * or the loops below are recognised and turned into calls to themselves. */
#include "kit.h"

void *memset(void *dst, int c, size_t n)
{
	unsigned char *d = dst;
	uint64_t pattern = (unsigned char)c * 0x0101010101010101ull;
	while (n > 0 && ((uintptr_t)d & 7) != 0) {
		*d++ = (unsigned char)c;
		n--;
	}
	for (; n >= 8; n -= 8, d += 8)
		*(uint64_t *)d = pattern;
	while (n-- > 0)
		*d++ = (unsigned char)c;
	return dst;
}

void *memcpy(void *dst, const void *src, size_t n)
{
	unsigned char *d = dst;
	const unsigned char *s = src;
	if ((((uintptr_t)d | (uintptr_t)s) & 7) == 0) {
		for (; n >= 8; n -= 8, d += 8, s += 8)
			*(uint64_t *)d = *(const uint64_t *)s;
	}
	while (n-- > 0)
		*d++ = *s++;
	return dst;
}

void *memmove(void *dst, const void *src, size_t n)
{
	unsigned char *d = dst;
	const unsigned char *s = src;
	if (d == s || n == 0)
		return dst;
	if (d < s || d >= s + n)
		return memcpy(dst, src, n);
	/* Overlap with the destination above the source: copy backwards. */
	while (n-- > 0)
		d[n] = s[n];
	return dst;
}

int memcmp(const void *a, const void *b, size_t n)
{
	const unsigned char *x = a, *y = b;
	for (size_t i = 0; i < n; i++) {
		if (x[i] != y[i])
			return x[i] < y[i] ? -1 : 1;
	}
	return 0;
}

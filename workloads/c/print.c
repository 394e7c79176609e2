/* A small write-based print helper: strings, decimal and hex numbers, into
 * a line buffer that goes out through the write system call. */
#include "kit.h"

static char buf[256];
static unsigned long used;

void print_flush(void)
{
	unsigned long done = 0;
	while (done < used) {
		long n = sys_write(1, buf + done, used - done);
		if (n <= 0)
			break;
		done += (unsigned long)n;
	}
	used = 0;
}

void print_char(char c)
{
	buf[used++] = c;
	if (c == '\n' || used == sizeof buf)
		print_flush();
}

void print_str(const char *s)
{
	while (*s)
		print_char(*s++);
}

void print_u64(uint64_t v)
{
	char digits[20];
	int n = 0;
	do {
		digits[n++] = (char)('0' + v % 10);
		v /= 10;
	} while (v != 0);
	while (n > 0)
		print_char(digits[--n]);
}

void print_i64(int64_t v)
{
	if (v < 0) {
		print_char('-');
		print_u64(-(uint64_t)v);
	} else {
		print_u64((uint64_t)v);
	}
}

void print_hex(uint64_t v)
{
	static const char hex[] = "0123456789abcdef";
	int shift = 60;
	print_str("0x");
	while (shift > 0 && (v >> shift) == 0)
		shift -= 4;
	for (; shift >= 0; shift -= 4)
		print_char(hex[(v >> shift) & 15]);
}

/* classify_matmul: the packet classifier's scoring step, a tiled integer
 * matrix product scores = features x weights, then the best class of each
 * packet.
 *
 * 64 packets x 64 features x 48 classes, 16 x 16 x 16 tiles. The operands
 * (about 40 KiB) just exceed a small L1 data cache; tiling keeps the working
 * set of the inner loops resident. The first rows are checked against an
 * untiled product.
 */
#include "kit.h"

#define P 64 /* packets */
#define F 64 /* features */
#define C 48 /* classes */
#define T 16 /* tile edge */

static int32_t features[P][F];
static int32_t weights[F][C];
static int32_t scores[P][C];

int main(void)
{
	uint64_t rng = 0xc1a55003;
	for (int p = 0; p < P; p++)
		for (int f = 0; f < F; f++)
			features[p][f] = (int32_t)kit_below(&rng, 256);
	for (int f = 0; f < F; f++)
		for (int c = 0; c < C; c++)
			weights[f][c] = (int32_t)kit_below(&rng, 33) - 16;

	KIT_MEASURE_START();
	for (int p0 = 0; p0 < P; p0 += T)
		for (int c0 = 0; c0 < C; c0 += T)
			for (int f0 = 0; f0 < F; f0 += T)
				for (int p = p0; p < p0 + T; p++)
					for (int f = f0; f < f0 + T; f++) {
						int32_t x = features[p][f];
						for (int c = c0; c < c0 + T; c++)
							scores[p][c] += x * weights[f][c];
					}

	/* Check the first rows against the untiled product. */
	int mismatches = 0;
	for (int p = 0; p < 4; p++)
		for (int c = 0; c < C; c++) {
			int32_t s = 0;
			for (int f = 0; f < F; f++)
				s += features[p][f] * weights[f][c];
			mismatches += s != scores[p][c];
		}

	uint32_t class_count[C] = {0};
	uint64_t checksum = 0;
	for (int p = 0; p < P; p++) {
		int best = 0;
		for (int c = 1; c < C; c++)
			if (scores[p][c] > scores[p][best])
				best = c;
		class_count[best]++;
		checksum = checksum * 1000003 + (uint64_t)(int64_t)scores[p][best];
	}
	int top = 0;
	for (int c = 1; c < C; c++)
		if (class_count[c] > class_count[top])
			top = c;

	print_str("classify_matmul: ");
	print_u64(P);
	print_str("x");
	print_u64(F);
	print_str("x");
	print_u64(C);
	print_str(" product, ");
	print_str(mismatches == 0 ? "check ok" : "CHECK FAILED");
	print_str(", most frequent class ");
	print_u64((uint64_t)top);
	print_str(" (");
	print_u64(class_count[top]);
	print_str(" packets), score[0][0] ");
	print_i64(scores[0][0]);
	print_str(", checksum ");
	print_hex(checksum);
	print_char('\n');
	return kit_exit_code(checksum) ^ (mismatches != 0);
}

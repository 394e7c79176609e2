/* size_histogram: the appliance's traffic statistics, a histogram of packet
 * sizes per ingress port.
 *
 * 32 ports x 96 buckets of 16 bytes (24 KiB of counters) updated by a stream
 * of packets whose sizes follow a mix of small, medium and full-size frames.
 * Updates are read-modify-writes to scattered counters; at the end the
 * per-port histograms are merged and the median and 99th percentile sizes
 * are read off.
 */
#include "kit.h"

#define PORTS 32u
#define BUCKETS 96u /* 16-byte buckets: sizes 0..1535 */
#define PACKETS 40000u

static uint64_t hist[PORTS][BUCKETS];
static uint64_t port_bytes[PORTS];

static uint32_t packet_size(uint64_t *rng)
{
	uint32_t pick = (uint32_t)kit_below(rng, 100);
	if (pick < 40)
		return 64; /* acknowledgements and control */
	if (pick < 60)
		return 576;
	if (pick < 90)
		return 1500; /* full frames */
	return 64 + (uint32_t)kit_below(rng, 1455);
}

/* The smallest bucket whose cumulative count reaches `rank`. */
static uint32_t bucket_at_rank(const uint64_t *merged, uint64_t rank)
{
	uint64_t seen = 0;
	for (uint32_t b = 0; b < BUCKETS; b++) {
		seen += merged[b];
		if (seen >= rank)
			return b;
	}
	return BUCKETS - 1;
}

int main(void)
{
	uint64_t rng = 0x512e0004;
	KIT_MEASURE_START();
	for (uint32_t i = 0; i < PACKETS; i++) {
		uint32_t port = (uint32_t)(kit_rand(&rng) >> 59); /* 0..31 */
		uint32_t size = packet_size(&rng);
		hist[port][size / 16]++;
		port_bytes[port] += size;
	}

	uint64_t merged[BUCKETS] = {0};
	uint64_t total_bytes = 0, busiest = 0;
	for (uint32_t p = 0; p < PORTS; p++) {
		for (uint32_t b = 0; b < BUCKETS; b++)
			merged[b] += hist[p][b];
		total_bytes += port_bytes[p];
		if (port_bytes[p] > port_bytes[busiest])
			busiest = p;
	}
	uint32_t p50 = bucket_at_rank(merged, PACKETS / 2);
	uint32_t p99 = bucket_at_rank(merged, (uint64_t)PACKETS * 99 / 100);
	uint64_t checksum = total_bytes;
	for (uint32_t b = 0; b < BUCKETS; b++)
		checksum = checksum * 0x100000001b3ull ^ merged[b];

	print_str("size_histogram: ");
	print_u64(PACKETS);
	print_str(" packets, ");
	print_u64(total_bytes);
	print_str(" bytes, median bucket ");
	print_u64(p50 * 16);
	print_str("..");
	print_u64(p50 * 16 + 15);
	print_str(", p99 bucket ");
	print_u64(p99 * 16);
	print_str("..");
	print_u64(p99 * 16 + 15);
	print_str(", busiest port ");
	print_u64(busiest);
	print_str(", checksum ");
	print_hex(checksum);
	print_char('\n');
	return kit_exit_code(checksum);
}

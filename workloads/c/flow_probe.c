/* flow_probe: the flow-table probe of the packet-lookup appliance, a hash
 * join of the packet stream against the table of known flows.
 *
 * Known flows are inserted into an open-addressing table (16384 slots of 32
 * bytes, 512 KiB); then each packet's 5-tuple is hashed and probed. Probes of
 * different packets are independent, so an out-of-order core can keep
 * several table misses in flight: this is the kernel that rewards
 * miss-under-miss and more miss-holding registers.
 */
#include "kit.h"

#define SLOTS 16384u /* a power of two */
#define FLOWS 6000u
#define PACKETS 16000u

struct flow_slot {
	uint64_t key; /* 0: empty */
	uint32_t packets;
	uint32_t flow_id;
	uint64_t bytes;
	uint64_t last_seen;
};

static struct flow_slot table[SLOTS];
static uint64_t keys[FLOWS];

/* Packs a 5-tuple into a nonzero 64-bit key. */
static uint64_t make_key(uint64_t *rng)
{
	uint64_t src = kit_rand(rng) & 0xffffffffu;
	uint64_t dst = kit_rand(rng) & 0xffffffffu;
	uint64_t ports = kit_rand(rng) & 0xffffffffu;
	uint64_t proto = (kit_rand(rng) & 1) ? 6 : 17;
	return ((src * 0x100000001b3ull) ^ (dst << 17) ^ (ports << 3) ^ proto) | 1;
}

static inline uint32_t slot_of(uint64_t key)
{
	uint64_t h = key * 0x9e3779b97f4a7c15ull;
	return (uint32_t)(h >> 50) & (SLOTS - 1);
}

int main(void)
{
	uint64_t rng = 0xf10e0002;
	uint64_t inserted = 0, insert_probes = 0;

	for (uint32_t f = 0; f < FLOWS; f++) {
		uint64_t key = make_key(&rng);
		keys[f] = key;
		uint32_t s = slot_of(key);
		while (table[s].key != 0 && table[s].key != key) {
			s = (s + 1) & (SLOTS - 1);
			insert_probes++;
		}
		if (table[s].key == 0) {
			table[s].key = key;
			table[s].flow_id = f;
			inserted++;
		}
	}

	KIT_MEASURE_START();
	uint64_t hits = 0, misses = 0, probes = 0, checksum = 0;
	for (uint32_t p = 0; p < PACKETS; p++) {
		/* Four packets in five belong to a known flow. */
		uint64_t key = kit_below(&rng, 5) != 0 ? keys[kit_below(&rng, FLOWS)] : make_key(&rng);
		uint32_t size = 64 + (uint32_t)kit_below(&rng, 1455);
		uint32_t s = slot_of(key);
		probes++;
		while (table[s].key != 0 && table[s].key != key) {
			s = (s + 1) & (SLOTS - 1);
			probes++;
		}
		if (table[s].key == key) {
			struct flow_slot *fs = &table[s];
			fs->packets++;
			fs->bytes += size;
			fs->last_seen = p;
			checksum += (uint64_t)fs->flow_id * size;
			hits++;
		} else {
			misses++;
		}
	}
	for (uint32_t s = 0; s < SLOTS; s++)
		checksum ^= table[s].bytes * (s | 1);

	print_str("flow_probe: ");
	print_u64(inserted);
	print_str(" flows, ");
	print_u64(PACKETS);
	print_str(" packets, ");
	print_u64(hits);
	print_str(" hits, ");
	print_u64(misses);
	print_str(" misses, ");
	print_u64(probes * 100 / PACKETS);
	print_str(" slots per 100 probes, checksum ");
	print_hex(checksum ^ insert_probes);
	print_char('\n');
	return kit_exit_code(checksum ^ insert_probes);
}

/* route_chase: the route-table walk of the packet-lookup appliance.
 *
 * The route nodes (one 64-byte line each, 1 MiB in all) are linked in a
 * random single cycle. Each lookup walks DEPTH nodes, starting where the
 * previous lookup stopped, comparing the destination address with each
 * node's prefix. Every hop is a load whose address comes from the previous
 * load, all through the measured region: no memory-level parallelism, one
 * miss at a time. This is the kernel where extra miss-holding registers
 * cannot help and only latency matters.
 */
#include "kit.h"

#define NODES 16384u /* a power of two */
#define LOOKUPS 2000u
#define DEPTH 32u

struct route_node {
	uint32_t next;     /* index of the next node on the walk */
	uint32_t next_hop; /* the answer if the walk stops here */
	uint64_t prefix;
	uint8_t pad[48]; /* one node per 64-byte line */
};

static struct route_node table[NODES];
static uint32_t order[NODES];

int main(void)
{
	uint64_t rng = 0x5eed0001;

	/* Sattolo's shuffle: a random permutation with a single cycle. */
	for (uint32_t i = 0; i < NODES; i++)
		order[i] = i;
	for (uint32_t i = NODES - 1; i > 0; i--) {
		uint32_t j = (uint32_t)kit_below(&rng, i);
		uint32_t t = order[i];
		order[i] = order[j];
		order[j] = t;
	}
	for (uint32_t i = 0; i < NODES; i++) {
		struct route_node *n = &table[order[i]];
		n->next = order[(i + 1) & (NODES - 1)];
		uint64_t r = kit_rand(&rng);
		n->next_hop = (uint32_t)(r & 0xff);
		n->prefix = r;
	}

	KIT_MEASURE_START();
	uint64_t checksum = 0, matched = 0;
	uint32_t node = order[0];
	for (uint32_t l = 0; l < LOOKUPS; l++) {
		uint64_t addr = kit_rand(&rng);
		uint32_t best = 0;
		for (uint32_t d = 0; d < DEPTH; d++) {
			const struct route_node *n = &table[node];
			/* "Longer prefix": more leading bits in common. */
			if (((n->prefix ^ addr) >> 56) == 0) {
				best = n->next_hop;
				matched++;
			}
			checksum = checksum * 31 + n->next_hop;
			node = n->next;
		}
		checksum ^= best;
	}

	print_str("route_chase: ");
	print_u64(NODES);
	print_str(" nodes, ");
	print_u64((uint64_t)LOOKUPS * DEPTH);
	print_str(" hops, ");
	print_u64(matched);
	print_str(" prefix matches, last node ");
	print_u64(node);
	print_str(", checksum ");
	print_hex(checksum);
	print_char('\n');
	return kit_exit_code(checksum);
}

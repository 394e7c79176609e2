//! The tag array of one set-associative cache and its replacement state.
//!
//! In one access it reads the set selected by the line number, compares every
//! way's tag, and on a hit updates the replacement state (a "touch"); a fill
//! writes one way, chosen among invalid ways first and then by the
//! replacement policy, and hands back the evicted line with its dirty and
//! prefetched bits. It holds no timing: the cache around it decides when.
//!
//! A tag is the full line number (address divided by the line size), so the
//! set index never has to be added back to rebuild a victim's address.

use crate::config::{CacheConfig, Replacement};

/// Marker for an empty way (no line number can reach it: line sizes are at
/// least 4 bytes).
const INVALID: u64 = u64::MAX;

/// Line flag: written since it was filled.
pub(crate) const DIRTY: u8 = 1;
/// Line flag: brought in by a prefetch and not yet used by a demand access.
pub(crate) const PREFETCHED: u8 = 2;

/// A line pushed out by a fill.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Evicted {
    /// Line number of the victim.
    pub line: u64,
    /// Flags of the victim (`DIRTY`, `PREFETCHED`).
    pub flags: u8,
}

/// Replacement state.
#[derive(Debug, Clone)]
enum Policy {
    /// One recency stamp per line; the smallest stamp in a set is the victim.
    Lru { stamps: Vec<u64>, clock: u64 },
    /// One bit per inner node of a binary tree per set (node 1 is the root,
    /// node n has children 2n and 2n+1; leaves are ways). A bit tells which
    /// half the victim search goes to: 0 left, 1 right.
    TreePlru { bits: Vec<u64>, levels: u32 },
    /// Uniform choice from a seeded generator.
    Random { rng: SplitMix64 },
}

/// Tags, flags and replacement state of one cache.
#[derive(Debug, Clone)]
pub(crate) struct TagArray {
    set_mask: u64,
    ways: usize,
    tags: Vec<u64>,
    flags: Vec<u8>,
    policy: Policy,
}

impl TagArray {
    /// An empty array for a validated configuration.
    pub fn new(cfg: &CacheConfig) -> Self {
        let sets = cfg.sets();
        let ways = cfg.ways as usize;
        let lines = (sets as usize) * ways;
        let policy = match cfg.replacement {
            Replacement::Lru => Policy::Lru {
                stamps: vec![0; lines],
                clock: 0,
            },
            Replacement::TreePlru => Policy::TreePlru {
                bits: vec![0; sets as usize],
                levels: cfg.ways.trailing_zeros(),
            },
            Replacement::Random => Policy::Random {
                rng: SplitMix64::new(cfg.seed),
            },
        };
        Self {
            set_mask: sets - 1,
            ways,
            tags: vec![INVALID; lines],
            flags: vec![0; lines],
            policy,
        }
    }

    #[inline]
    fn set_base(&self, line: u64) -> usize {
        ((line & self.set_mask) as usize) * self.ways
    }

    /// The slot (set * ways + way) holding `line`, if present. Reads only.
    #[inline]
    pub fn lookup(&self, line: u64) -> Option<usize> {
        let base = self.set_base(line);
        self.tags[base..base + self.ways]
            .iter()
            .position(|&t| t == line)
            .map(|w| base + w)
    }

    /// Record a use of `slot` in the replacement state.
    #[inline]
    pub fn touch(&mut self, slot: usize) {
        let ways = self.ways;
        match &mut self.policy {
            Policy::Lru { stamps, clock } => {
                *clock += 1;
                stamps[slot] = *clock;
            }
            Policy::TreePlru { bits, levels } => {
                let set = slot / ways;
                let way = slot % ways;
                let mut node = 1usize;
                let mut b = bits[set];
                for level in (0..*levels).rev() {
                    let right = (way >> level) & 1;
                    // Point the node away from the way just used.
                    if right == 1 {
                        b &= !(1u64 << node);
                    } else {
                        b |= 1u64 << node;
                    }
                    node = 2 * node + right;
                }
                bits[set] = b;
            }
            Policy::Random { .. } => {}
        }
    }

    /// Flags of `slot`.
    #[inline]
    pub fn flags(&self, slot: usize) -> u8 {
        self.flags[slot]
    }

    /// Set `flag` on `slot`.
    #[inline]
    pub fn set_flag(&mut self, slot: usize, flag: u8) {
        self.flags[slot] |= flag;
    }

    /// Clear `flag` on `slot`.
    #[inline]
    pub fn clear_flag(&mut self, slot: usize, flag: u8) {
        self.flags[slot] &= !flag;
    }

    /// Write `line` with `flags` into its set and mark it most recently used.
    /// If the line is already present its flags are merged instead. Returns
    /// the line pushed out, if a valid one was.
    pub fn install(&mut self, line: u64, flags: u8) -> Option<Evicted> {
        if let Some(slot) = self.lookup(line) {
            self.flags[slot] |= flags;
            self.touch(slot);
            return None;
        }
        let base = self.set_base(line);
        let slot = match self.tags[base..base + self.ways]
            .iter()
            .position(|&t| t == INVALID)
        {
            Some(w) => base + w,
            None => base + self.victim_way(base),
        };
        let old = self.tags[slot];
        let evicted = (old != INVALID).then(|| Evicted {
            line: old,
            flags: self.flags[slot],
        });
        self.tags[slot] = line;
        self.flags[slot] = flags;
        self.touch(slot);
        evicted
    }

    /// The way the policy evicts from a full set starting at `base`.
    fn victim_way(&mut self, base: usize) -> usize {
        let ways = self.ways;
        match &mut self.policy {
            Policy::Lru { stamps, .. } => {
                let set = &stamps[base..base + ways];
                let mut best = 0;
                for (w, &s) in set.iter().enumerate() {
                    if s < set[best] {
                        best = w;
                    }
                }
                best
            }
            Policy::TreePlru { bits, levels } => {
                let b = bits[base / ways];
                let mut node = 1usize;
                for _ in 0..*levels {
                    node = 2 * node + ((b >> node) & 1) as usize;
                }
                node - ways
            }
            Policy::Random { rng } => (rng.next() % ways as u64) as usize,
        }
    }
}

/// SplitMix64 (Steele, Lea and Flood, OOPSLA 2014): a tiny, seedable,
/// well-mixed 64-bit generator.
#[derive(Debug, Clone)]
pub(crate) struct SplitMix64 {
    state: u64,
}

impl SplitMix64 {
    /// A generator starting from `seed`.
    pub fn new(seed: u64) -> Self {
        Self { state: seed }
    }

    /// The next value.
    pub fn next(&mut self) -> u64 {
        self.state = self.state.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::config::CacheConfig;

    fn cfg(ways: u32, sets: u64, replacement: Replacement) -> CacheConfig {
        CacheConfig {
            size_bytes: sets * u64::from(ways) * 64,
            ways,
            replacement,
            ..CacheConfig::l1d()
        }
    }

    #[test]
    fn lru_evicts_least_recent() {
        // common practice: LRU evicts the line whose last use is oldest.
        let mut t = TagArray::new(&cfg(4, 1, Replacement::Lru));
        for l in 0..4 {
            assert_eq!(t.install(l, 0), None);
        }
        let s0 = t.lookup(0).unwrap();
        t.touch(s0);
        assert_eq!(t.install(4, 0).map(|e| e.line), Some(1));
        assert_eq!(t.install(5, 0).map(|e| e.line), Some(2));
    }

    #[test]
    fn tree_plru_four_ways_matches_hand_walk() {
        // common practice: tree-PLRU on 4 ways after touching ways 0,1,2,3 in
        // order points at way 0; touching 0 then moves it to way 2.
        let mut t = TagArray::new(&cfg(4, 1, Replacement::TreePlru));
        for l in 0..4 {
            t.install(l, 0);
        }
        assert_eq!(t.install(10, 0).map(|e| e.line), Some(0));
        // Now ways: 10,1,2,3 with 10 most recent (way 0); the tree points to
        // the right half (ways 2,3), and inside it at way 2.
        assert_eq!(t.install(11, 0).map(|e| e.line), Some(2));
    }

    #[test]
    fn plru_never_evicts_most_recent() {
        // common practice: tree-PLRU never picks the most recently used way.
        let mut t = TagArray::new(&cfg(8, 1, Replacement::TreePlru));
        let mut rng = SplitMix64::new(7);
        let mut last = None;
        for _ in 0..2000 {
            let line = rng.next() % 20;
            if let Some(s) = t.lookup(line) {
                t.touch(s);
            } else if let Some(e) = t.install(line, 0) {
                assert_ne!(Some(e.line), last);
            }
            last = Some(line);
        }
    }

    #[test]
    fn random_is_seeded() {
        let run = |seed| {
            let mut c = cfg(4, 1, Replacement::Random);
            c.seed = seed;
            let mut t = TagArray::new(&c);
            (0..64)
                .filter_map(|l| t.install(l, 0).map(|e| e.line))
                .collect::<Vec<_>>()
        };
        assert_eq!(run(3), run(3));
        assert_ne!(run(3), run(4));
    }

    #[test]
    fn sets_are_independent() {
        let mut t = TagArray::new(&cfg(2, 4, Replacement::Lru));
        // Lines 0, 4, 8 share set 0; line 1 is in set 1.
        t.install(0, DIRTY);
        t.install(1, 0);
        t.install(4, 0);
        let e = t.install(8, 0).unwrap();
        assert_eq!(
            e,
            Evicted {
                line: 0,
                flags: DIRTY
            }
        );
        assert!(t.lookup(1).is_some());
    }
}

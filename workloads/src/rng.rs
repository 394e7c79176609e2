//! SplitMix64, the generator behind every workload's data (Steele, Lea and
//! Flood, "Fast splittable pseudorandom number generators", OOPSLA 2014).
//!
//! The same algorithm is emitted as assembly ([`crate::asm::Asm::splitmix_step`])
//! when a program builds its own random data, so the Rust side and the program
//! side agree bit for bit.

/// The golden-ratio increment added to the state before each output.
pub(crate) const GOLDEN: u64 = 0x9E37_79B9_7F4A_7C15;
/// First multiplier of the output mix.
pub(crate) const MIX1: u64 = 0xBF58_476D_1CE4_E5B9;
/// Second multiplier of the output mix.
pub(crate) const MIX2: u64 = 0x94D0_49BB_1331_11EB;

/// A SplitMix64 generator: 64 bits of state, one output per step.
#[derive(Clone, Debug)]
pub(crate) struct SplitMix64 {
    state: u64,
}

impl SplitMix64 {
    /// A generator whose first step adds [`GOLDEN`] to `seed`.
    pub(crate) fn new(seed: u64) -> SplitMix64 {
        SplitMix64 { state: seed }
    }

    /// The next output.
    pub(crate) fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(GOLDEN);
        mix(self.state)
    }
}

/// The SplitMix64 output function applied to one state value.
pub(crate) fn mix(state: u64) -> u64 {
    let mut z = state;
    z = (z ^ (z >> 30)).wrapping_mul(MIX1);
    z = (z ^ (z >> 27)).wrapping_mul(MIX2);
    z ^ (z >> 31)
}

#[cfg(test)]
mod tests {
    use super::SplitMix64;

    #[test]
    fn reference_outputs() {
        // Source: recalled from memory, the first outputs of the reference
        // splitmix64.c (Vigna) seeded with 0 that other ports test against.
        let mut r = SplitMix64::new(0);
        assert_eq!(r.next_u64(), 0xE220_A839_7B1D_CDAF);
        assert_eq!(r.next_u64(), 0x6E78_9E6A_A1B9_65F4);
    }
}

//! Deterministic randomness: hashes of the seed and of integer positions,
//! and the quantization of coordinates.

pub const GOLDEN: u64 = 0x9e37_79b9_7f4a_7c15;

/// The SplitMix64 finaliser (Steele, Lea and Flood 2014): a bijective mix
/// of 64 bits.
pub fn mix(mut z: u64) -> u64 {
    z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    z ^ (z >> 31)
}

/// A hash of the seed, a purpose tag and three integers.
pub fn hash(seed: u64, tag: u64, a: i64, b: i64, c: i64) -> u64 {
    let mut h = mix(seed ^ GOLDEN.wrapping_mul(tag + 1));
    for v in [a, b, c] {
        h = mix(h.wrapping_add(GOLDEN) ^ v as u64);
    }
    h
}

/// Uniform in [0, 1).
pub fn unit(h: u64) -> f64 {
    (h >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
}

/// Uniform in [-1, 1).
pub fn signed(h: u64) -> f64 {
    2.0 * unit(h) - 1.0
}

/// A SplitMix64 stream, started from a hash.
pub struct Rng(pub u64);

impl Rng {
    pub fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(GOLDEN);
        mix(self.0)
    }
    pub fn unit(&mut self) -> f64 {
        unit(self.next())
    }
    pub fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }
    pub fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }
    pub fn pick<'a>(&mut self, words: &[&'a str]) -> &'a str {
        words[self.below(words.len())]
    }
}

// Purpose tags of the hashes.
pub const TAG_CORNER: u64 = 1;
pub const TAG_SIDE: u64 = 2;
pub const TAG_POP: u64 = 3;
pub const TAG_PARK: u64 = 4;
pub const TAG_SITE: u64 = 5;
pub const TAG_SPECIAL: u64 = 6;
// Tags of the amenity tables (added later; the tables above never use
// them, so their rows do not depend on whether these tables are made).
pub const TAG_GROCERY: u64 = 7;
pub const TAG_CLINIC: u64 = 8;
pub const TAG_HAZARD: u64 = 9;
pub const TAG_LIBRARY: u64 = 10;

/// Degrees rounded to 1e-7 (about 1 cm): short text, exact round trip.
pub fn q7(v: f64) -> f64 {
    (v * 1e7).round() / 1e7
}

/// Degrees rounded to 1e-6, the precision of the licensing list.
pub fn q6(v: f64) -> f64 {
    (v * 1e6).round() / 1e6
}

// Tags of the national country (never used by the demo state).
/// Heavy sides: which full coarse sides have hundreds of segments.
pub const TAG_HEAVY: u64 = 11;
/// The national layout: states, counties, cores.
pub const TAG_COUNTRY: u64 = 12;

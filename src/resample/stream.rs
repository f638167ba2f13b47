//! Seeded random streams, one per purpose.
//!
//! A [`Stream`] is derived from the plan seed and a purpose label (`"seal"`,
//! `"resample/kfold/0"`, ...), so adding a purpose never moves the draws of
//! another. Everything a stream yields is defined here, bit for bit, from the
//! ChaCha20 keystream; nothing depends on the `rand` crate's distributions,
//! whose values are not promised to stay stable across versions.
//!
//! Derivation, exactly:
//!
//! 1. `key = BLAKE3(seed.to_le_bytes() || label.as_bytes())`: the 32-byte
//!    BLAKE3 hash (default mode, no key) of the seed as 8 little-endian bytes
//!    followed by the label's UTF-8 bytes, with no separator or length prefix
//!    (the seed has a fixed width, so the pair is unambiguous).
//! 2. The ChaCha20 keystream (20 rounds; Bernstein's layout with a 64-bit
//!    block counter and a 64-bit nonce, both starting at zero) under that
//!    key, as produced by `rand_chacha::ChaCha20Rng::from_seed(key)`. With a
//!    zero nonce and counters below 2^32 this is the same keystream as the
//!    RFC 8439 cipher with a zero 96-bit nonce and block counter 0.
//! 3. [`Stream::next_u64`] reads the next 8 keystream bytes as a
//!    little-endian `u64`. Every other method is built on `next_u64` only.

use rand_chacha::ChaCha20Rng;
use rand_core::{Rng, SeedableRng};

/// A seeded random stream derived from the plan seed and a purpose label.
#[derive(Clone, Debug)]
pub struct Stream {
    rng: ChaCha20Rng,
}

impl Stream {
    /// The stream for `label` under plan seed `seed` (see the module docs for
    /// the derivation).
    pub fn new(seed: u64, label: &str) -> Stream {
        let mut hasher = blake3::Hasher::new();
        hasher.update(&seed.to_le_bytes());
        hasher.update(label.as_bytes());
        Stream::from_key(*hasher.finalize().as_bytes())
    }

    /// The stream of the ChaCha20 keystream under `key` (step 2 above).
    fn from_key(key: [u8; 32]) -> Stream {
        Stream {
            rng: ChaCha20Rng::from_seed(key),
        }
    }

    /// The next 64 random bits: the next 8 keystream bytes, little-endian.
    ///
    /// `rand_chacha` returns the next two 32-bit keystream words, low word
    /// first, which is the same value; the RFC 8439 test below pins it.
    pub fn next_u64(&mut self) -> u64 {
        self.rng.next_u64()
    }

    /// A uniform integer in `0..n`, without bias; `below(0)` is 0 and draws
    /// nothing.
    ///
    /// Lemire's widening multiply with rejection (D. Lemire, "Fast random
    /// integer generation in an interval", ACM TOMACS 29(1), 2019): take
    /// `x = next_u64()`, form the 128-bit product `m = x * n`; if the low 64
    /// bits of `m` are below `2^64 mod n` (computed as `n.wrapping_neg() % n`),
    /// draw `x` again; otherwise return the high 64 bits of `m`. The
    /// remainder is only computed when the low bits fall below `n`.
    pub fn below(&mut self, n: u64) -> u64 {
        if n == 0 {
            return 0;
        }
        let mut m = u128::from(self.next_u64()) * u128::from(n);
        if (m as u64) < n {
            let threshold = n.wrapping_neg() % n;
            while (m as u64) < threshold {
                m = u128::from(self.next_u64()) * u128::from(n);
            }
        }
        (m >> 64) as u64
    }

    /// Shuffle `items` in place, every order equally likely.
    ///
    /// Fisher-Yates (Durstenfeld's form) from the last index down: for
    /// `i = len - 1, len - 2, ..., 1`, swap `items[i]` with
    /// `items[below(i + 1)]`. A slice of length 0 or 1 draws nothing.
    pub fn shuffle<T>(&mut self, items: &mut [T]) {
        for i in (1..items.len()).rev() {
            let j = self.below(i as u64 + 1) as usize;
            items.swap(i, j);
        }
    }

    /// A uniform float in `[0, 1)` with 53 random bits:
    /// `(next_u64() >> 11) * 2^-53`, exact in an `f64`.
    pub fn unit(&mut self) -> f64 {
        const SCALE: f64 = 1.0 / (1u64 << 53) as f64;
        (self.next_u64() >> 11) as f64 * SCALE
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keystream_matches_rfc_8439_zero_key_vector() {
        // RFC 8439 (ChaCha20 and Poly1305), appendix A.1, test vector #1:
        // key all zero, nonce all zero, block counter 0. The first 16 bytes
        // of the keystream are 76 b8 e0 ad a0 f1 3d 90 40 5d 6a e5 53 86 bd 28
        // (also reproduced with Python cryptography 48.0.0's ChaCha20).
        let mut s = Stream::from_key([0u8; 32]);
        assert_eq!(s.next_u64(), u64::from_le_bytes(hex8("76b8e0ada0f13d90")));
        assert_eq!(s.next_u64(), u64::from_le_bytes(hex8("405d6ae55386bd28")));
    }

    fn hex8(text: &str) -> [u8; 8] {
        let mut out = [0u8; 8];
        for (i, byte) in out.iter_mut().enumerate() {
            *byte = u8::from_str_radix(&text[2 * i..2 * i + 2], 16).unwrap_or(0);
        }
        out
    }

    #[test]
    fn first_words_for_seed_and_label_are_pinned() {
        // [ref] Reproduced from the documented derivation with Python
        // blake3 (PyPI) and cryptography 48.0.0's ChaCha20 (key =
        // BLAKE3(7u64 LE || b"resample/kfold/0"), 16-byte zero nonce): an
        // outside check of steps 1 to 3.
        let mut s = Stream::new(7, "resample/kfold/0");
        let got: Vec<u64> = (0..3).map(|_| s.next_u64()).collect();
        assert_eq!(got, PINNED_WORDS);
    }

    const PINNED_WORDS: [u64; 3] = [
        0x7c46_6a7a_55e1_5c7d,
        0x40b9_2195_bf6f_ef15,
        0xd24b_482d_29c2_165a,
    ];

    #[test]
    fn derived_values_are_pinned() {
        // Stability pin: these values pin this implementation so that any
        // change to below, shuffle or unit (and so to every split) fails
        // loudly. They were also reproduced by an independent Python
        // transcription of the documented algorithms over the Python
        // blake3 + cryptography 48.0.0 keystream, which checks the
        // transcription, not the algorithms' choice.
        let mut s = Stream::new(7, "stability");
        let below: Vec<u64> = (0..6).map(|_| s.below(10)).collect();
        let mut items: Vec<u32> = (0..8).collect();
        s.shuffle(&mut items);
        let unit = s.unit();
        assert_eq!(below, PINNED_BELOW);
        assert_eq!(items, PINNED_SHUFFLE);
        assert_eq!(unit.to_bits(), PINNED_UNIT_BITS);
    }

    const PINNED_BELOW: [u64; 6] = [3, 6, 1, 4, 4, 9];
    const PINNED_SHUFFLE: [u32; 8] = [1, 5, 0, 3, 2, 4, 7, 6];
    const PINNED_UNIT_BITS: u64 = 0x3fc7_fc5c_fbe6_0fac;

    #[test]
    fn labels_and_seeds_give_different_streams() {
        let first = |seed, label| Stream::new(seed, label).next_u64();
        assert_ne!(first(7, "seal"), first(7, "resample/kfold/0"));
        assert_ne!(first(7, "seal"), first(8, "seal"));
        assert_eq!(first(7, "seal"), first(7, "seal"));
    }

    #[test]
    fn below_stays_in_range_and_covers_it() {
        let mut s = Stream::new(1, "below");
        let mut seen = [0usize; 7];
        for _ in 0..7000 {
            seen[s.below(7) as usize] += 1;
        }
        // Each of 7 values expected 1000 times (sd about 30): a band of
        // 850..1150 is five sd wide on either side.
        assert!(seen.iter().all(|&c| (850..1150).contains(&c)), "{seen:?}");
        assert_eq!(s.below(0), 0);
        assert_eq!(s.below(1), 0);
    }

    #[test]
    fn below_rejects_the_biased_low_products() {
        // n = 2^63 + 1: 2^64 mod n = 2^63 - 1, so nearly half of all x are
        // rejected; the results must still lie below n.
        let n = (1u64 << 63) + 1;
        let mut s = Stream::new(3, "wide");
        assert!((0..200).all(|_| s.below(n) < n));
    }

    #[test]
    fn shuffle_is_a_permutation_and_unit_is_in_range() {
        let mut s = Stream::new(5, "shuffle");
        let mut items: Vec<u32> = (0..100).collect();
        s.shuffle(&mut items);
        let mut sorted = items.clone();
        sorted.sort_unstable();
        assert_eq!(sorted, (0..100).collect::<Vec<u32>>());
        assert_ne!(items, sorted);
        assert!((0..1000).map(|_| s.unit()).all(|u| (0.0..1.0).contains(&u)));
    }
}

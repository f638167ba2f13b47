//! Seeded random streams, one per purpose. (Being built.)

/// A seeded random stream derived from the plan seed and a purpose label.
#[derive(Clone, Debug)]
pub struct Stream {
    state: u64,
}

impl Stream {
    /// The stream for `label` under plan seed `seed`.
    pub fn new(seed: u64, label: &str) -> Stream {
        let _ = label;
        Stream { state: seed }
    }

    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(1);
        self.state
    }
}

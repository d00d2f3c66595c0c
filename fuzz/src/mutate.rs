//! A havoc-style mutator: bit flips, interesting integers, block deletes,
//! inserts and copies, dictionary tokens, decimal numbers and splices with
//! other corpus entries, one to eight at a time.

/// xorshift64*: small, fast, seeded, reproducible.
pub struct Rng(u64);

impl Rng {
    /// A generator from a seed (0 is replaced).
    pub fn new(seed: u64) -> Self {
        Rng(seed.max(1))
    }

    /// The next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        self.0 = x;
        x.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }

    /// Uniform-ish below `n` (0 when `n` is 0).
    pub fn below(&mut self, n: usize) -> usize {
        if n == 0 {
            0
        } else {
            (self.next_u64() % n as u64) as usize
        }
    }
}

const INTERESTING: [u64; 16] = [
    0,
    1,
    2,
    0x7F,
    0x80,
    0xFF,
    0x100,
    0x7FFF,
    0x8000,
    0xFFFF,
    0x1_0000,
    0x7FFF_FFFF,
    0x8000_0000,
    0xFFFF_FFFF,
    0x7FFF_FFFF_FFFF_FFFF,
    u64::MAX,
];

/// Mutates `data` in place.
pub fn mutate(data: &mut Vec<u8>, rng: &mut Rng, corpus: &[Vec<u8>], dictionary: &[&[u8]], max_len: usize) {
    let rounds = 1 << rng.below(4);
    for _ in 0..rounds {
        let len = data.len();
        match rng.below(13) {
            0 if len > 0 => {
                let i = rng.below(len);
                data[i] ^= 1 << rng.below(8);
            }
            1 if len > 0 => {
                let i = rng.below(len);
                data[i] = rng.next_u64() as u8;
            }
            2 if len > 0 => {
                let i = rng.below(len);
                data[i] = INTERESTING[rng.below(7)] as u8;
            }
            3 if len > 0 => {
                let i = rng.below(len);
                let d = 1 + rng.below(16) as u8;
                data[i] = if rng.next_u64() & 1 == 0 {
                    data[i].wrapping_add(d)
                } else {
                    data[i].wrapping_sub(d)
                };
            }
            4 if len > 0 => {
                let v = INTERESTING[rng.below(INTERESTING.len())];
                let width = [2usize, 4, 8][rng.below(3)];
                let i = rng.below(len);
                let bytes = v.to_le_bytes();
                for (k, b) in bytes.iter().take(width).enumerate() {
                    if let Some(slot) = data.get_mut(i + k) {
                        *slot = *b;
                    }
                }
            }
            5 if len > 1 => {
                let start = rng.below(len);
                let n = 1 + rng.below((len - start).min(64));
                data.drain(start..start + n);
            }
            6 => {
                let at = rng.below(len + 1);
                let n = 1 + rng.below(16);
                let fill: Vec<u8> = (0..n).map(|_| rng.next_u64() as u8).collect();
                data.splice(at..at, fill);
            }
            7 if len > 1 => {
                let start = rng.below(len);
                let n = 1 + rng.below((len - start).min(64));
                let chunk = data[start..start + n].to_vec();
                let at = rng.below(len + 1);
                data.splice(at..at, chunk);
            }
            8 | 9 if !dictionary.is_empty() => {
                let token = dictionary[rng.below(dictionary.len())];
                let at = rng.below(len + 1);
                if rng.next_u64() & 1 == 0 || at + token.len() > len {
                    data.splice(at..at, token.iter().copied());
                } else {
                    data[at..at + token.len()].copy_from_slice(token);
                }
            }
            10 => {
                let digits = 1 + rng.below(24);
                let number: Vec<u8> = (0..digits).map(|_| b'0' + rng.below(10) as u8).collect();
                let at = rng.below(len + 1);
                data.splice(at..at, number);
            }
            11 | 12 if !corpus.is_empty() => {
                let other = &corpus[rng.below(corpus.len())];
                if other.is_empty() {
                    continue;
                }
                let start = rng.below(other.len());
                let n = 1 + rng.below(other.len() - start);
                let chunk = &other[start..start + n];
                let at = rng.below(len + 1);
                if rng.next_u64() & 1 == 0 {
                    data.splice(at..at, chunk.iter().copied());
                } else {
                    data.truncate(at);
                    data.extend_from_slice(chunk);
                }
            }
            _ => {}
        }
    }
    data.truncate(max_len);
}

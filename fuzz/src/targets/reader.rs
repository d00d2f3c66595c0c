//! Structured values drawn from fuzz bytes; past the end, every read is 0.

/// Reads a byte slice front to back.
pub struct Reader<'a> {
    bytes: &'a [u8],
}

impl<'a> Reader<'a> {
    /// Starts at the front of `bytes`.
    pub fn new(bytes: &'a [u8]) -> Self {
        Reader { bytes }
    }

    /// Whether all bytes were read.
    pub fn is_empty(&self) -> bool {
        self.bytes.is_empty()
    }

    /// The next byte.
    pub fn u8(&mut self) -> u8 {
        match self.bytes.split_first() {
            Some((&b, rest)) => {
                self.bytes = rest;
                b
            }
            None => 0,
        }
    }

    /// The next two bytes, little-endian.
    pub fn u16(&mut self) -> u16 {
        u16::from_le_bytes([self.u8(), self.u8()])
    }

    /// The next eight bytes, little-endian.
    pub fn u64(&mut self) -> u64 {
        let mut b = [0u8; 8];
        for x in &mut b {
            *x = self.u8();
        }
        u64::from_le_bytes(b)
    }

    /// A number below `n` (0 when `n` is 0).
    pub fn below(&mut self, n: usize) -> usize {
        if n == 0 {
            0
        } else {
            usize::from(self.u16()) % n
        }
    }

    /// A weight: mostly small, sometimes huge, so sums overflow now and then.
    pub fn weight(&mut self, small: u64) -> u64 {
        match self.u8() % 16 {
            0 => self.u64(),
            1 => u64::MAX - u64::from(self.u8()),
            2 => 0,
            _ => u64::from(self.u8()) % (small + 1),
        }
    }

    /// `len` bytes, or what is left.
    pub fn bytes(&mut self, len: usize) -> &'a [u8] {
        let len = len.min(self.bytes.len());
        let (head, rest) = self.bytes.split_at(len);
        self.bytes = rest;
        head
    }

    /// Everything left.
    pub fn rest(&mut self) -> &'a [u8] {
        self.bytes(usize::MAX)
    }
}

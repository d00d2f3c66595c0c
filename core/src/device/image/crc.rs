//! The image checksum: CRC-32 of zlib and PNG, computed bit by bit.
//!
//! O(8 steps per byte), no table and no heap; the arithmetic is on `u32`
//! with wrapping shifts and XOR, which cannot overflow.

/// CRC-32 as used by zlib, PNG and Ethernet (reflected, polynomial
/// 0xEDB88320, initial and final XOR 0xFFFFFFFF), bit by bit with no table:
/// a device pays about 8 steps a byte and no 1 KiB table in flash.
pub fn crc32(bytes: &[u8]) -> u32 {
    let mut crc = !0u32;
    for &b in bytes {
        crc ^= u32::from(b);
        for _ in 0..8 {
            let low_bit = (crc & 1).wrapping_neg();
            crc = (crc >> 1) ^ (0xEDB8_8320 & low_bit);
        }
    }
    !crc
}

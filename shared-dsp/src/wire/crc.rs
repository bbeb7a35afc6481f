//! CRC-32 (ISO-HDLC / IEEE 802.3: reflected polynomial 0xEDB88320, initial
//! value and final xor 0xFFFFFFFF), from the `crc` crate's catalogue.
//!
//! Without a table (`NoTable`: eight shift-and-xor steps per byte): on the
//! real board's release image it is 392 bytes smaller than the nibble-table
//! loop it replaced (flash 64 524 → 64 132, `scripts/check-budgets`), and a
//! 256-entry table would cost a kilobyte. The CRC runs once per frame, not
//! inside `Pipeline::push`, so the recorded instructions per sample
//! (docs/performance.toml) do not move.

use crc::{Crc, NoTable, CRC_32_ISO_HDLC};

/// The frames' CRC.
const CRC32: Crc<u32, NoTable> = Crc::<u32, NoTable>::new(&CRC_32_ISO_HDLC);

/// CRC-32 of `data`.
pub fn crc32(data: &[u8]) -> u32 {
    CRC32.checksum(data)
}

#[cfg(test)]
mod tests {
    #[test]
    fn check_value() {
        // The standard check value of CRC-32/ISO-HDLC for "123456789"
        // (catalogue of parametrised CRC algorithms, reveng).
        assert_eq!(super::crc32(b"123456789"), 0xCBF4_3926);
        assert_eq!(super::crc32(b""), 0);
    }
}

//! Consistent Overhead Byte Stuffing: S. Cheshire, M. Baker, "Consistent
//! overhead byte stuffing", IEEE/ACM Trans. Networking 7(2):159–173, 1999.
//! Removes every 0x00 from a frame so 0x00 can mark frame ends, at a cost of
//! at most one byte in 254.
//!
//! Hand-written rather than the `cobs` crate (0.4, no default features),
//! which encodes and decodes the same bytes (the unit tests and proptests
//! here pass with it) but made the real board's release image 112 bytes
//! larger (flash 64 132 with this file, 64 244 with the crate;
//! `scripts/check-budgets`). Neither runs inside `Pipeline::push`, so the
//! recorded instructions per sample (docs/performance.toml) are the same
//! with either: frames are encoded once per beat, state change or status.

/// Encoded length of `n` bytes (without the delimiter).
pub const fn max_encoded_len(n: usize) -> usize {
    n + n / 254 + 1
}

/// Encode `src` into `dst`; returns the encoded length, or `None` if `dst`
/// is too small. No 0x00 appears in the output.
pub fn encode(src: &[u8], dst: &mut [u8]) -> Option<usize> {
    if dst.len() < max_encoded_len(src.len()) {
        return None;
    }
    let mut code_at = 0;
    let mut out = 1;
    let mut code: u8 = 1;
    for (i, &b) in src.iter().enumerate() {
        if b == 0 {
            dst[code_at] = code;
            code_at = out;
            out += 1;
            code = 1;
        } else {
            dst[out] = b;
            out += 1;
            code += 1;
            // A full block of 254 bytes closes without a zero; it opens a
            // new block only if input remains (the canonical encoding).
            if code == 0xFF && i + 1 < src.len() {
                dst[code_at] = code;
                code_at = out;
                out += 1;
                code = 1;
            }
        }
    }
    dst[code_at] = code;
    Some(out)
}

/// Decode `buf[..len]` in place; returns the decoded length, or `None` when
/// the bytes are not valid COBS (a 0x00 inside, a code running past the end).
pub fn decode_in_place(buf: &mut [u8], len: usize) -> Option<usize> {
    let (mut read, mut write) = (0, 0);
    while read < len {
        let code = buf[read] as usize;
        if code == 0 || read + code > len {
            return None;
        }
        read += 1;
        for _ in 1..code {
            let b = buf[read];
            if b == 0 {
                return None;
            }
            buf[write] = b;
            write += 1;
            read += 1;
        }
        // A code below 0xFF stands for a zero, except at the very end.
        if code < 0xFF && read < len {
            buf[write] = 0;
            write += 1;
        }
    }
    Some(write)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn round_trip(data: &[u8]) {
        let mut enc = [0u8; 600];
        let n = encode(data, &mut enc).unwrap();
        assert!(!enc[..n].contains(&0));
        let mut buf = enc;
        let m = decode_in_place(&mut buf, n).unwrap();
        assert_eq!(&buf[..m], data);
    }

    #[test]
    fn published_examples_and_edge_cases() {
        // Worked examples of the COBS paper's scheme (as commonly tabulated).
        let mut enc = [0u8; 16];
        let n = encode(&[0x11, 0x22, 0x00, 0x33], &mut enc).unwrap();
        assert_eq!(&enc[..n], &[0x03, 0x11, 0x22, 0x02, 0x33]);
        let n = encode(&[0x00], &mut enc).unwrap();
        assert_eq!(&enc[..n], &[0x01, 0x01]);
        let n = encode(&[], &mut enc).unwrap();
        assert_eq!(&enc[..n], &[0x01]);
        round_trip(&[0, 0, 0]);
        // 254 non-zero bytes: one full block, no trailing code.
        let full: std::vec::Vec<u8> = (1..=254).collect();
        let mut big = [0u8; 300];
        let n = encode(&full, &mut big).unwrap();
        assert_eq!((n, big[0]), (255, 0xFF));
        round_trip(&full);
        round_trip(&(0..=255).cycle().take(520).collect::<std::vec::Vec<u8>>());
    }

    #[test]
    fn invalid_input_is_refused() {
        let mut b = [0x05, 0x11, 0x22];
        assert_eq!(decode_in_place(&mut b, 3), None);
        let mut b = [0x03, 0x00, 0x22];
        assert_eq!(decode_in_place(&mut b, 3), None);
    }
}

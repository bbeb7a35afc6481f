//! What the wire_decoder fuzz target does with one input. Shared with
//! `shared-dsp/tests/fuzz_regressions.rs` (included by path), so a
//! checked-in input runs exactly what the fuzzer ran.

use plethwire_dsp::wire::{
    cobs_decode, crc32, decode_frame, encode_frame, Decoder, Frame, MAX_FRAME, MAX_RAW_FRAME,
};

/// The wire: the bytes through the streaming decoder; then the bytes as
/// a frame's body with its CRC appended (random bytes would never pass
/// the CRC), through the decoder. A frame that decodes encodes back to
/// the same frame.
pub fn wire_decoder(data: &[u8]) {
    let mut decoder = Decoder::new();
    for &b in data {
        if let Some(Ok(frame)) = decoder.push(b) {
            round_trip(&frame);
        }
    }
    let mut raw = data[..data.len().min(MAX_RAW_FRAME)].to_vec();
    raw.extend(crc32(&raw).to_le_bytes());
    if let Ok(frame) = decode_frame(&raw) {
        round_trip(&frame);
    }
    let mut buf = data.to_vec();
    let len = buf.len();
    let _ = cobs_decode(&mut buf, len);
}

/// Encode `frame`, decode that and encode again: the same bytes come back
/// (bytes, not frames, are compared: a NaN sample is not equal to itself).
fn round_trip(frame: &Frame) {
    let mut first = [0u8; MAX_FRAME];
    let Ok(n) = encode_frame(frame.seq, &frame.message, &mut first) else {
        return;
    };
    let mut back = Decoder::new();
    let again = first[..n].iter().find_map(|&b| back.push(b));
    let Some(Ok(again)) = again else {
        panic!("an encoded frame does not decode: {again:?}");
    };
    let mut second = [0u8; MAX_FRAME];
    let m = encode_frame(again.seq, &again.message, &mut second).expect("encode again");
    assert_eq!(
        first[..n],
        second[..m],
        "a decoded frame does not round-trip"
    );
}

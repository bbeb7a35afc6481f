use super::*;

const ALL: [SignalFormat; 10] = [
    SignalFormat::Diff8,
    SignalFormat::Fmt16,
    SignalFormat::Fmt24,
    SignalFormat::Fmt32,
    SignalFormat::Fmt61,
    SignalFormat::Fmt80,
    SignalFormat::Fmt160,
    SignalFormat::Fmt212,
    SignalFormat::Fmt310,
    SignalFormat::Fmt311,
];

#[test]
fn codes_round_trip_and_odd_codes_are_refused() {
    for f in ALL {
        assert_eq!(SignalFormat::from_code(f.code()), Ok(f));
    }
    assert_eq!(SignalFormat::from_code(999), Err(FormatProblem::Unknown));
    assert!(matches!(
        SignalFormat::from_code(516),
        Err(FormatProblem::Unsupported(_))
    ));
}

// Byte layouts written out by hand from signal(5).
#[test]
fn format_212_packs_two_samples_in_three_bytes() {
    // 1, -2048, 3 -> 01 80 00 | 03 00: the odd last sample takes two bytes.
    let bytes = [0x01, 0x80, 0x00, 0x03, 0x00];
    assert_eq!(SignalFormat::Fmt212.bytes_for(3), 5);
    assert_eq!(SignalFormat::Fmt212.decode(&bytes, 3), vec![1, -2048, 3]);
    // 2047 and -5: FF, low nibble 7 | high nibble B, FB.
    assert_eq!(
        SignalFormat::Fmt212.decode(&[0xFF, 0xF7, 0xFB], 2),
        vec![2047, -5]
    );
}

#[test]
fn format_80_is_offset_binary() {
    assert_eq!(
        SignalFormat::Fmt80.decode(&[0x81, 0x00, 0xFF], 3),
        vec![1, -128, 127]
    );
}

#[test]
fn byte_orders_of_16_61_160_24_32() {
    assert_eq!(
        SignalFormat::Fmt16.decode(&[0xFE, 0xFF, 0x00, 0x80], 2),
        vec![-2, -32768]
    );
    assert_eq!(SignalFormat::Fmt61.decode(&[0xFF, 0xFE], 1), vec![-2]);
    assert_eq!(
        SignalFormat::Fmt160.decode(&[0x00, 0x80, 0x00, 0x00], 2),
        vec![0, -32768]
    );
    assert_eq!(
        SignalFormat::Fmt24.decode(&[0xFF, 0xFF, 0xFF, 0x00, 0x00, 0x80], 2),
        vec![-1, -(1 << 23)]
    );
    assert_eq!(
        SignalFormat::Fmt32.decode(&[0x01, 0x00, 0x00, 0x80], 1),
        vec![i32::MIN + 1]
    );
}

#[test]
fn formats_310_and_311_pack_three_ten_bit_samples() {
    // 311: 1 | -1 << 10 | -512 << 20 in one little-endian word.
    let word: u32 = 1 | (0x3FF << 10) | (0x200 << 20);
    assert_eq!(
        SignalFormat::Fmt311.decode(&word.to_le_bytes(), 3),
        vec![1, -1, -512]
    );
    // 310: s0 in bits 1..=10 of word 0, s1 in bits 1..=10 of word 1,
    // s2's low five bits in bits 11..=15 of word 0, high five in word 1.
    let (s0, s1, s2) = (5i32, -3i32, 300i32);
    let (u0, u1, u2) = (s0 as u16 & 0x3FF, s1 as u16 & 0x3FF, s2 as u16 & 0x3FF);
    let w0 = (u0 << 1) | ((u2 & 0x1F) << 11);
    let w1 = (u1 << 1) | ((u2 >> 5) << 11);
    let mut bytes = w0.to_le_bytes().to_vec();
    bytes.extend(w1.to_le_bytes());
    assert_eq!(SignalFormat::Fmt310.decode(&bytes, 3), vec![5, -3, 300]);
    assert_eq!(SignalFormat::Fmt310.bytes_for(1), 2);
    assert_eq!(SignalFormat::Fmt310.bytes_for(2), 4);
    assert_eq!(SignalFormat::Fmt311.bytes_for(2), 3);
}

#[test]
fn samples_in_is_the_most_that_fits() {
    for f in ALL {
        for b in 0..60u64 {
            let n = f.samples_in(b);
            assert!(f.bytes_for(n) <= b, "{f:?} b={b}");
            assert!(f.bytes_for(n + 1) > b, "{f:?} b={b}");
        }
    }
}

#[test]
fn format_8_differences_are_summed_per_signal() {
    // Two signals, the first with two samples per frame.
    let mut stream = vec![1, 1, 10, -1, 0, -5];
    undo_differences(&mut stream, &[2, 1], &[100, 0]);
    assert_eq!(stream, vec![101, 102, 10, 101, 101, 5]);
}

#[test]
fn invalid_values_are_each_formats_minimum() {
    for f in ALL {
        if let Some(v) = f.invalid_value() {
            assert_eq!(v, f.range().0, "{f:?}");
        }
    }
}

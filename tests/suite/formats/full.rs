//! The binary tables' shared frame: CRC, round trips through the Rust reader and the C
//! decoder, damaged tables.

use super::*;

// ---------------------------------------------------------------------------
// CRC

#[test]
fn crc32_check_value_of_123456789() {
    // CRC-32 (IEEE 802.3 polynomial, reflected, init and xorout 0xFFFFFFFF): check value
    // 0xCBF43926 for "123456789" (R. Williams, "A Painless Guide to CRC Error Detection
    // Algorithms", 1993, the CRC-32 model).
    assert_eq!(crc32fast::hash(b"123456789"), 0xCBF4_3926);
    let dir = tmp_dir("crc");
    let file = dir.join("check.txt");
    std::fs::write(&file, b"123456789").unwrap();
    let (code, out, _) = run_c(common::decoder(), &["crc", path_str(&file)]);
    assert_eq!(code, 0);
    assert_eq!(out.trim(), "cbf43926");
}

// ---------------------------------------------------------------------------
// Binary tables, Rust reader and C decoder

/// Every frame of both binary forms decodes, in Rust and in C, to the bytes pushed.
fn round_trip(name: &str, leds: u32, order: WireOrder, frames: usize, seed: u64) {
    let frames: Vec<_> = ShowGen::run_heavy(leds as usize, frames, seed).collect();
    let spec = spec(leds, order, frames.len());
    let want = wire_all(order, &frames);
    let fs = spec.frame_size() as usize;
    let dir = tmp_dir(name);
    for form in [TableForm::Full, TableForm::Compact] {
        let (bytes, stats) = table(form, spec, &frames);
        let view = read_table(&bytes).expect("Rust reader accepts");
        assert_eq!(view.form(), form);
        assert_eq!(view.spec(), spec);
        assert_eq!(Some(view.crc32()), stats.crc32);
        assert_same_frames(
            &rust_decode_all(&bytes),
            &want,
            fs,
            &format!("{name} {form:?} Rust"),
        );
        let tag = format!("{form:?}");
        assert_same_frames(
            &c_decode_all(&bytes, &dir, &tag),
            &want,
            fs,
            &format!("{name} {form:?} C"),
        );
        // The C decoder reports the header figures.
        let file = dir.join(format!("{tag}.bin"));
        let (code, info, _) = run_c(common::decoder(), &["info", path_str(&file)]);
        assert_eq!(code, 0);
        let form_name = if form == TableForm::Full {
            "full"
        } else {
            "compact"
        };
        let letters = String::from_utf8(order.letters().to_vec()).unwrap();
        let want_info = format!(
            "form={form_name} frame_rate_hz=500 leds={leds} frames={} bytes_per_led={} order={} \
             frame_size={fs} segments={} crc32={:08x}",
            frames.len(),
            order.bytes_per_led(),
            letters.trim_end_matches('\0'),
            view.segment_count(),
            stats.crc32.unwrap()
        );
        assert_eq!(info.trim(), want_info);
        // Random access: single frames read by index agree too.
        let mut rng = Rng(seed ^ 0x5eed);
        for _ in 0..5 {
            let k = rng.below(frames.len() as u64) as usize;
            let (code, hex, _) = run_c(
                common::decoder(),
                &["frame", path_str(&file), &k.to_string()],
            );
            assert_eq!(code, 0);
            let want_hex: String = want[k * fs..(k + 1) * fs]
                .iter()
                .map(|b| format!("{b:02x}"))
                .collect();
            assert_eq!(hex.trim(), want_hex, "{name} {form:?} frame {k}");
        }
        let (code, _, err) = run_c(
            common::decoder(),
            &["frame", path_str(&file), &frames.len().to_string()],
        );
        assert_eq!((code, err.trim()), (1, "error: frame out of range"));
    }
}

#[test]
fn one_led_grb_round_trips_through_both_decoders() {
    round_trip("one_led_grb", 1, WireOrder::Grb, 5000, 1);
}

#[test]
fn seventy_two_leds_rgb_round_trip_through_both_decoders() {
    round_trip("seventy_two_rgb", 72, WireOrder::Rgb, 3000, 2);
}

#[test]
fn four_byte_rgbw_round_trips_through_both_decoders() {
    round_trip("rgbw", 8, WireOrder::Rgbw, 3000, 3);
    round_trip("grbw", 1, WireOrder::Grbw, 2000, 4);
}

#[test]
fn every_wire_order_round_trips_in_rust() {
    for (i, name) in WireOrder::names().iter().enumerate() {
        let order = WireOrder::from_name(name).unwrap();
        let frames: Vec<_> = ShowGen::run_heavy(3, 700, 10 + i as u64).collect();
        let spec = spec(3, order, frames.len());
        let want = wire_all(order, &frames);
        for form in [TableForm::Full, TableForm::Compact] {
            let (bytes, _) = table(form, spec, &frames);
            assert_same_frames(
                &rust_decode_all(&bytes),
                &want,
                spec.frame_size() as usize,
                name,
            );
        }
    }
}

#[test]
fn full_table_is_header_frames_trailer() {
    // Layout of firmware-formats/full-table.md: 36-byte header, frames, 12-byte trailer.
    let frames: Vec<_> = ShowGen::run_heavy(5, 40, 7).collect();
    let spec = spec(5, WireOrder::Bgr, frames.len());
    let (bytes, stats) = table(TableForm::Full, spec, &frames);
    let data = wire_all(WireOrder::Bgr, &frames);
    assert_eq!(bytes.len(), 36 + data.len() + 12);
    assert_eq!(&bytes[..36], &spec.header(*b"GSTF"));
    assert_eq!(&bytes[36..36 + data.len()], &data[..]);
    let t = &bytes[36 + data.len()..];
    assert_eq!(
        u32::from_le_bytes(t[0..4].try_into().unwrap()) as usize,
        data.len()
    );
    assert_eq!(u32::from_le_bytes(t[4..8].try_into().unwrap()), 0);
    let crc = u32::from_le_bytes(t[8..12].try_into().unwrap());
    assert_eq!(crc, crc32fast::hash(&bytes[..bytes.len() - 4]));
    assert_eq!(stats.crc32, Some(crc));
    assert_eq!(stats.frames, 40);
}

#[test]
fn a_flipped_bit_is_refused_by_both_decoders() {
    let frames: Vec<_> = ShowGen::run_heavy(72, 600, 21).collect();
    let spec = spec(72, WireOrder::Grb, frames.len());
    let dir = tmp_dir("flipped");
    for form in [TableForm::Full, TableForm::Compact] {
        let (mut bytes, _) = table(form, spec, &frames);
        // One bit in the middle of the payload (frame data), then one in the header.
        let mid = 36 + (bytes.len() - 48) / 2;
        for (at, bit) in [(mid, 3u8), (13, 0u8)] {
            bytes[at] ^= 1 << bit;
            let rust = read_table(&bytes).unwrap_err();
            assert!(
                matches!(rust, ReadError::Crc { .. }),
                "{form:?} byte {at}: {rust}"
            );
            let file = dir.join(format!("{form:?}-{at}.bin"));
            std::fs::write(&file, &bytes).unwrap();
            let (code, _, err) = run_c(common::decoder(), &["info", path_str(&file)]);
            assert_eq!(
                (code, err.trim()),
                (1, "error: CRC mismatch"),
                "{form:?} byte {at}"
            );
            bytes[at] ^= 1 << bit;
        }
        assert!(read_table(&bytes).is_ok());
    }
}

#[test]
fn every_single_byte_error_is_refused() {
    // A CRC of degree 32 detects every error burst of 32 bits or fewer (W. W. Peterson and
    // D. T. Brown, "Cyclic Codes for Error Detection", Proc. IRE, 1961); a changed byte is one.
    let frames: Vec<_> = ShowGen::run_heavy(2, 120, 33).collect();
    let spec = spec(2, WireOrder::Rgbw, frames.len());
    let dir = tmp_dir("single_byte");
    for form in [TableForm::Full, TableForm::Compact] {
        let (bytes, _) = table(form, spec, &frames);
        for at in 0..bytes.len() {
            for delta in [1u8, 0x80, 0xff] {
                let mut bad = bytes.clone();
                bad[at] ^= delta;
                assert!(
                    read_table(&bad).is_err(),
                    "{form:?}: byte {at} ^ {delta:#x} accepted"
                );
            }
        }
        // The C decoder on a sample of positions, header, data, index and trailer alike.
        for at in (0..bytes.len()).step_by(bytes.len() / 12) {
            let mut bad = bytes.clone();
            bad[at] ^= 0x10;
            let file = dir.join(format!("{form:?}-{at}.bin"));
            std::fs::write(&file, &bad).unwrap();
            let (code, _, _) = run_c(common::decoder(), &["info", path_str(&file)]);
            assert_eq!(code, 1, "{form:?}: C accepted byte {at} changed");
        }
        // Truncation and extension are refused as well.
        assert!(read_table(&bytes[..bytes.len() - 1]).is_err());
        let mut longer = bytes.clone();
        longer.push(0);
        assert!(read_table(&longer).is_err());
        assert!(read_table(&bytes[..20]).is_err());
        assert!(read_table(&[]).is_err());
    }
}

#[test]
fn zero_frame_tables_are_valid_and_empty() {
    let spec = spec(4, WireOrder::Grb, 0);
    for form in [TableForm::Full, TableForm::Compact] {
        let (bytes, stats) = table(form, spec, &[]);
        assert_eq!(bytes.len(), 48);
        assert_eq!(stats.frames, 0);
        let view = read_table(&bytes).unwrap();
        let mut buf = [0u8; 12];
        assert!(matches!(
            view.frame(0, &mut buf),
            Err(ReadError::FrameOutOfRange { frame: 0, count: 0 })
        ));
        let dir = tmp_dir("zero_frames");
        assert!(c_decode_all(&bytes, &dir, &format!("{form:?}")).is_empty());
    }
}

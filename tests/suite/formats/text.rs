//! The text forms: CSV and the C header.

use super::*;

// ---------------------------------------------------------------------------
// CSV

#[test]
fn csv_has_the_documented_header_and_one_row_per_frame() {
    // docs/conventions.md, "CSV table": header frame,time_s,r0,g0,b0,r1,...; time_s = frame start.
    let spec = TableSpec {
        frame_rate_hz: 3,
        leds: 2,
        order: WireOrder::Grbw,
        frame_count: 4,
    };
    let frames = vec![
        vec![[255, 0, 0], [0, 0, 0]],
        vec![[1, 2, 3], [4, 5, 6]],
        vec![[255, 255, 255], [10, 20, 30]],
        vec![[0, 0, 0], [0, 128, 255]],
    ];
    let mut out = Vec::new();
    let stats = push_all(CsvWriter::new(&mut out, spec).unwrap(), &frames);
    let text = String::from_utf8(out).unwrap();
    // Times: k / 3 s to six decimals; channels always R,G,B whatever the wire order.
    assert_eq!(
        text,
        "frame,time_s,r0,g0,b0,r1,g1,b1\n\
         0,0.000000,255,0,0,0,0,0\n\
         1,0.333333,1,2,3,4,5,6\n\
         2,0.666667,255,255,255,10,20,30\n\
         3,1.000000,0,0,0,0,128,255\n"
    );
    assert_eq!(stats.bytes_written, text.len() as u64);
    assert_eq!(stats.frames, 4);
    assert_eq!(stats.table_bytes, None);
}

#[test]
fn csv_rows_parse_back_to_the_frames() {
    let frames: Vec<_> = ShowGen::run_heavy(5, 1500, 12).collect();
    let spec = spec(5, WireOrder::Rgb, frames.len());
    let mut out = Vec::new();
    push_all(CsvWriter::new(&mut out, spec).unwrap(), &frames);
    let text = String::from_utf8(out).unwrap();
    let mut lines = text.lines();
    assert_eq!(lines.next().unwrap().split(',').count(), 2 + 15);
    for (k, (line, frame)) in lines.zip(&frames).enumerate() {
        let cells: Vec<&str> = line.split(',').collect();
        assert_eq!(cells[0], k.to_string());
        let t: f64 = cells[1].parse().unwrap();
        assert!((t - k as f64 / 500.0).abs() < 5e-7, "frame {k} time {t}");
        let bytes: Vec<u8> = cells[2..].iter().map(|c| c.parse().unwrap()).collect();
        assert_eq!(bytes, frame.concat(), "frame {k}");
    }
}

// ---------------------------------------------------------------------------
// C header

#[test]
fn c_header_compiles_and_embeds_a_decodable_table() {
    let dir = tmp_dir("c_header");
    let frames: Vec<_> = ShowGen::run_heavy(6, 900, 50).collect();
    let spec = spec(6, WireOrder::Grbw, frames.len());
    let want = wire_all(WireOrder::Grbw, &frames);
    for (form, name, ident, macro_) in [
        (TableForm::Full, "left", "left_table", "LEFT_TABLE"),
        (
            TableForm::Compact,
            "Right Staff #2",
            "right_staff_2_table",
            "RIGHT_STAFF_2_TABLE",
        ),
    ] {
        let mut text = Vec::new();
        let stats = push_all(
            CHeaderWriter::new(&mut text, spec, name, form).unwrap(),
            &frames,
        );
        assert_eq!(stats.bytes_written, text.len() as u64);
        let (binary, bstats) = table(form, spec, &frames);
        assert_eq!(stats.table_bytes, Some(binary.len() as u64));
        assert_eq!(stats.crc32, bstats.crc32);
        let text = String::from_utf8(text).unwrap();
        assert!(text.contains(&format!("#ifndef {macro_}_H\n#define {macro_}_H\n")));
        assert!(text.contains(&format!(
            "static const uint8_t {ident}[] {macro_}_STORAGE = {{"
        )));
        assert!(text.contains(&format!("#define {macro_}_SIZE {}u\n", binary.len())));
        assert!(text.ends_with(&format!("#endif /* {macro_}_H */\n")));
        // The hex is exactly the binary table.
        let hex: Vec<u8> = text
            .lines()
            .filter(|l| l.starts_with("    0x"))
            .flat_map(|l| l.split(','))
            .filter_map(|t| t.trim().strip_prefix("0x"))
            .map(|h| u8::from_str_radix(h, 16).unwrap())
            .collect();
        assert_eq!(hex, binary);
        // Compile it into the C decoder's driver and decode it from the array.
        let header = dir.join(format!("{ident}.h"));
        std::fs::write(&header, &text).unwrap();
        let exe = dir.join(format!("embed_{ident}"));
        common::build_decoder(
            &exe,
            &[
                &format!("-DEMBED_HEADER=\"{}\"", path_str(&header)),
                &format!("-DEMBED_NAME={ident}"),
                &format!("-DEMBED_MACRO={macro_}"),
            ],
        );
        let dump = dir.join(format!("{ident}.dump"));
        let (code, info, err) = run_c(&exe, &["embedded", path_str(&dump)]);
        assert_eq!(code, 0, "{err}");
        assert!(info.contains("wire_order=grbw"), "{info}");
        assert_same_frames(&std::fs::read(&dump).unwrap(), &want, 24, "embedded");
    }
}

#[test]
fn c_header_text_is_deterministic_and_guarded() {
    let frames: Vec<_> = ShowGen::run_heavy(2, 50, 9).collect();
    let spec = spec(2, WireOrder::Rgb, frames.len());
    let make = || {
        let mut text = Vec::new();
        push_all(
            CHeaderWriter::new(&mut text, spec, "9 lives", TableForm::Compact).unwrap(),
            &frames,
        );
        String::from_utf8(text).unwrap()
    };
    let a = make();
    assert_eq!(a, make());
    assert!(a.contains("#ifndef PROP_9_LIVES_TABLE_H"));
    assert!(a.contains("#define PROP_9_LIVES_TABLE_IS_COMPACT 1\n"));
    assert!(a.contains("#define PROP_9_LIVES_TABLE_FRAME_COUNT 50u\n"));
    assert!(a.contains("#define PROP_9_LIVES_TABLE_FRAME_RATE_HZ 500u\n"));
    assert!(a.contains("#define PROP_9_LIVES_TABLE_LED_COUNT 2u\n"));
    assert!(a.is_ascii());
}

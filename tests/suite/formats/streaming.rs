//! Writers stream: memory stays flat, incompressible data passes on, wrong input is an error.

use super::*;

// ---------------------------------------------------------------------------
// Streaming

/// Shares its count with the test while a writer owns it.
struct SharedCounter(std::rc::Rc<std::cell::Cell<u64>>);

impl Write for SharedCounter {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.0.set(self.0.get() + buf.len() as u64);
        Ok(buf.len())
    }
    fn flush(&mut self) -> io::Result<()> {
        Ok(())
    }
}

#[test]
fn four_minute_show_at_500_hz_with_72_leds_streams() {
    // 240 s * 500 Hz = 120 000 frames of 216 bytes: 25.9 MB that no writer may hold.
    let leds = 72u32;
    let n = 120_000usize;
    let spec = spec(leds, WireOrder::Grb, n);
    let fs = spec.frame_size();
    let slack = 2 * 64 * 1024 + 40 * fs;
    let full_count = std::rc::Rc::new(std::cell::Cell::new(0u64));
    let compact_count = std::rc::Rc::new(std::cell::Cell::new(0u64));
    let mut full = FullTableWriter::new(SharedCounter(full_count.clone()), spec).unwrap();
    let mut compact = CompactTableWriter::new(SharedCounter(compact_count.clone()), spec).unwrap();
    // Noise (incompressible) between run-heavy stretches.
    let mut show = ShowGen::new(leds as usize, n, 240, [20, 10, 5, 20, 5]);
    for k in 0..n {
        let f = show.next().unwrap();
        full.push_frame(&f).unwrap();
        compact.push_frame(&f).unwrap();
        if k % 5000 == 4999 {
            let pushed = (k as u64 + 1) * fs;
            assert!(
                full_count.get() + slack >= pushed,
                "full writer holds {} bytes after frame {k}",
                pushed - full_count.get()
            );
        }
    }
    let sf = full.finish().unwrap();
    let sc = compact.finish().unwrap();
    assert_eq!(sf.bytes_written, 36 + 120_000 * 216 + 12);
    assert_eq!(sf.bytes_written, full_count.get());
    assert_eq!(sc.bytes_written, compact_count.get());
    let seg = sc.segments.unwrap();
    println!(
        "4-minute show, 72 LEDs grb: full {} bytes, compact {} bytes, {} segments",
        sf.bytes_written,
        sc.bytes_written,
        seg.total_segments()
    );
    assert!(sc.bytes_written < sf.bytes_written);
}

#[test]
fn writers_pass_incompressible_data_on_at_once() {
    // Noise cannot be compressed, so a writer that streams must have passed on all but its
    // buffers (64 KiB each) and a few frames by the time each frame is pushed.
    let leds = 72u32;
    let n = 20_000usize;
    let spec = spec(leds, WireOrder::Rgb, n);
    let fs = spec.frame_size();
    let counts: Vec<_> = (0..3)
        .map(|_| std::rc::Rc::new(std::cell::Cell::new(0u64)))
        .collect();
    let mut compact = CompactTableWriter::new(SharedCounter(counts[0].clone()), spec).unwrap();
    let mut header = CHeaderWriter::new(
        SharedCounter(counts[1].clone()),
        spec,
        "noise",
        TableForm::Compact,
    )
    .unwrap();
    let mut csv = CsvWriter::new(SharedCounter(counts[2].clone()), spec).unwrap();
    let slack = 2 * 64 * 1024 + 40 * fs;
    for (k, f) in ShowGen::new(leds as usize, n, 4, [0, 0, 0, 1, 0]).enumerate() {
        compact.push_frame(&f).unwrap();
        header.push_frame(&f).unwrap();
        csv.push_frame(&f).unwrap();
        let pushed = (k as u64 + 1) * fs;
        // Binary: one byte per byte; hex text: at least five characters per byte; CSV: at
        // least two characters (digit and comma) per byte.
        for (count, per_byte, what) in [
            (&counts[0], 1, "compact"),
            (&counts[1], 5, "C header"),
            (&counts[2], 2, "CSV"),
        ] {
            assert!(
                count.get() + per_byte * slack >= per_byte * pushed,
                "{what} writer holds back {} bytes after frame {k}",
                per_byte * pushed - count.get()
            );
        }
    }
    assert_eq!(compact.finish().unwrap().bytes_written, counts[0].get());
    assert_eq!(header.finish().unwrap().bytes_written, counts[1].get());
    assert_eq!(csv.finish().unwrap().bytes_written, counts[2].get());
}

// ---------------------------------------------------------------------------
// Errors, not panics

#[test]
fn wrong_frames_are_errors() {
    let spec = spec(3, WireOrder::Grb, 2);
    let good = vec![[1u8, 2, 3]; 3];
    let short = vec![[1u8, 2, 3]; 2];
    let mut out = Vec::new();
    let mut w = CompactTableWriter::new(&mut out, spec).unwrap();
    assert!(matches!(
        w.push_frame(&short),
        Err(OutputError::WrongLedCount {
            frame: 0,
            expected: 3,
            got: 2
        })
    ));
    w.push_frame(&good).unwrap();
    assert!(matches!(
        w.finish(),
        Err(OutputError::MissingFrames {
            expected: 2,
            got: 1
        })
    ));
    let mut out = Vec::new();
    let mut w = FullTableWriter::new(&mut out, spec).unwrap();
    w.push_frame(&good).unwrap();
    w.push_frame(&good).unwrap();
    assert!(matches!(
        w.push_frame(&good),
        Err(OutputError::TooManyFrames { expected: 2 })
    ));
    let mut out = Vec::new();
    let mut w = CsvWriter::new(&mut out, spec).unwrap();
    assert!(w.push_frame(&[]).is_err());
    let bad = TableSpec {
        frame_rate_hz: 0,
        ..spec
    };
    assert!(FullTableWriter::new(Vec::new(), bad).is_err());
    assert!(CompactTableWriter::new(Vec::new(), bad).is_err());
    assert!(CsvWriter::new(Vec::new(), bad).is_err());
    assert!(CHeaderWriter::new(Vec::new(), bad, "x", TableForm::Full).is_err());
}

/// Fails every write after `limit` bytes.
struct Failing(usize);

impl Write for Failing {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        if buf.len() > self.0 {
            return Err(io::Error::other("disk full"));
        }
        self.0 -= buf.len();
        Ok(buf.len())
    }
    fn flush(&mut self) -> io::Result<()> {
        Ok(())
    }
}

#[test]
fn write_failures_are_reported() {
    // The output refuses bytes after a limit: some push, or finish, must return the error.
    let frames: Vec<_> = ShowGen::run_heavy(72, 2000, 3).collect();
    let spec = spec(72, WireOrder::Grb, frames.len());
    fn fails<F: FrameWriter>(mut w: F, frames: &[Vec<[u8; 3]>]) -> bool {
        for f in frames {
            if let Err(e) = w.push_frame(f) {
                return matches!(e, OutputError::Io(_));
            }
        }
        matches!(w.finish(), Err(OutputError::Io(_)))
    }
    for limit in [0, 10, 1000] {
        assert!(fails(
            FullTableWriter::new(Failing(limit), spec).unwrap(),
            &frames
        ));
        assert!(fails(
            CompactTableWriter::new(Failing(limit), spec).unwrap(),
            &frames
        ));
        assert!(fails(
            CsvWriter::new(Failing(limit), spec).unwrap(),
            &frames
        ));
        let h = CHeaderWriter::new(Failing(limit), spec, "x", TableForm::Full).unwrap();
        assert!(fails(h, &frames));
    }
}

//! The main job: a show compiled into per-prop frame tables, previews and a
//! report, written so that a failed run leaves earlier outputs untouched.
//!
//! Everything is first written into a staging folder inside the output
//! folder; only when every file is complete are they renamed into place.
//! Tables are streamed frame by frame (one frame buffer per prop), one prop
//! per thread.

use std::fs::{self, File};
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::sync::mpsc::{SyncSender, sync_channel};
use std::thread::JoinHandle;

use rayon::prelude::*;
use serde::Serialize;

use crate::check::light::{LightScan, LightTally};
use crate::check::{CheckReport, CheckSettings, FrameFigures};
use crate::cues::Landing;
use crate::model::Show;
use crate::output::{
    CHeaderText, CompactTableWriter, CsvWriter, FrameWriter, FullTableWriter, OutputError,
    TableForm, TableSpec, WriteStats,
};
use crate::prepared::Prepared;
use crate::preview::{self, PreviewOptions};

/// Most frames a show may have.
pub const MAX_FRAMES: u64 = 100_000_000;
/// Most bytes all full binary tables of a show may take together (2 GiB).
pub const MAX_TABLE_BYTES: u64 = 2 << 30;

/// How to compile.
#[derive(Clone, Debug)]
pub struct CompileOptions {
    /// The folder the outputs go to (created if missing).
    pub out_dir: PathBuf,
    /// Landing tolerance along the head's path, millimetres.
    pub tolerance_mm: f64,
    /// Which binary form the C header embeds.
    pub header_form: TableForm,
    /// Whether to render previews (one per section and one of the whole show).
    pub previews: bool,
    /// How to render them.
    pub preview: PreviewOptions,
}

impl CompileOptions {
    /// Defaults for output folder `out_dir`: 10 mm tolerance, compact C
    /// header, previews on.
    pub fn new(out_dir: PathBuf) -> Self {
        CompileOptions {
            out_dir,
            tolerance_mm: 10.0,
            header_form: TableForm::Compact,
            previews: true,
            preview: PreviewOptions::default(),
        }
    }
}

/// One file written, and its size.
#[derive(Clone, Debug, Serialize)]
pub struct FileInfo {
    /// File name inside the output folder.
    pub file: String,
    /// Size in bytes.
    pub bytes: u64,
    /// CRC-32 stored in a binary table's trailer.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub crc32: Option<String>,
}

/// The tables of one prop.
#[derive(Clone, Debug, Serialize)]
pub struct PropTables {
    /// LEDs per frame.
    pub leds: u32,
    /// Byte order on the wire (binary forms and C header).
    pub wire_order: &'static str,
    /// `P.csv`.
    pub csv: FileInfo,
    /// `P.full.bin`, every frame.
    pub full: FileInfo,
    /// `P.compact.bin`, runs and fades.
    pub compact: FileInfo,
    /// `P.h`, the C header.
    pub header: FileInfo,
}

/// What a compile produced.
#[derive(Clone, Debug, Serialize)]
pub struct CompileSummary {
    /// Show title.
    pub title: String,
    /// Frames per second.
    pub frame_rate_hz: u32,
    /// Frames in every table.
    pub frames: u64,
    /// Length of the show, seconds.
    pub duration_s: f64,
    /// Tables per prop, in prop order.
    pub tables: Vec<(String, PropTables)>,
    /// Preview file names.
    pub previews: Vec<String>,
    /// The landing furthest along the head's path, if any change was placed.
    #[serde(skip)]
    pub worst_landing: Option<Landing>,
    /// Warnings in the check report.
    pub warnings: usize,
    /// Props dimmed by `brightness_limit`, with the scale applied.
    pub dimmed: Vec<(String, f64)>,
}

/// Why a compile failed.
#[derive(Debug, thiserror::Error)]
pub enum CompileError {
    /// The show is larger than the limits.
    #[error("{0}")]
    TooLarge(String),
    /// Writing failed.
    #[error("{0}")]
    Io(String),
    /// A table writer refused its input.
    #[error("{0}")]
    Table(#[from] OutputError),
    /// The check could not run.
    #[error("{0}")]
    Check(String),
    /// A preview could not be rendered.
    #[error(
        "{0}; the tables were not written either: compile with --no-previews, and take pictures of parts of the show with `glowscore preview --bars A-B`"
    )]
    Preview(#[from] preview::PreviewError),
}

/// Refuses a show whose tables would exceed [`MAX_FRAMES`] or
/// [`MAX_TABLE_BYTES`], before anything is allocated.
pub fn check_limits(show: &Show) -> Result<u32, CompileError> {
    let frames = show.frame_count();
    let bytes: u64 = show
        .props
        .iter()
        .map(|p| frames.saturating_mul(u64::from(p.leds) * p.wire_order.bytes_per_led() as u64))
        .sum();
    if frames > MAX_FRAMES || bytes > MAX_TABLE_BYTES {
        let leds: u32 = show.props.iter().map(|p| p.leds).sum();
        return Err(CompileError::TooLarge(format!(
            "the tables would be too large: {frames} frames ({:.1} s at {} frames/s) x {leds} LEDs \
             in all = {bytes} bytes; the limits are {MAX_FRAMES} frames and {MAX_TABLE_BYTES} bytes \
             (lower `show.frame_rate`, shorten the show or use fewer LEDs)",
            show.end_s(),
            show.frame_rate_hz
        )));
    }
    Ok(frames as u32)
}

/// Compiles the prepared show into `opts.out_dir`.
pub fn compile(
    prepared: &Prepared,
    opts: &CompileOptions,
) -> Result<(CompileSummary, CheckReport), CompileError> {
    let show = prepared.show();
    check_limits(show)?;
    let settings = CheckSettings {
        tolerance_mm: opts.tolerance_mm,
        ..CheckSettings::default()
    };
    crate::check::within_budget(prepared, &settings)
        .map_err(|e| CompileError::Check(e.to_string()))?;
    let io = |what: &Path, e: std::io::Error| {
        CompileError::Io(format!("cannot write `{}`: {e}", what.display()))
    };
    fs::create_dir_all(&opts.out_dir).map_err(|e| io(&opts.out_dir, e))?;
    let staging = opts
        .out_dir
        .join(format!(".glowscore-staging-{}", std::process::id()));
    let _ = fs::remove_dir_all(&staging);
    fs::create_dir(&staging).map_err(|e| io(&staging, e))?;
    let result = write_all(prepared, &settings, opts, &staging);
    let outcome = result.and_then(|(summary, report)| {
        let mut names: Vec<String> = summary
            .tables
            .iter()
            .flat_map(|(_, t)| [&t.csv, &t.full, &t.compact, &t.header].map(|f| f.file.clone()))
            .collect();
        names.extend(summary.previews.iter().cloned());
        names.push("report.json".into());
        for name in &names {
            let to = opts.out_dir.join(name);
            fs::rename(staging.join(name), &to).map_err(|e| io(&to, e))?;
        }
        Ok((summary, report))
    });
    let _ = fs::remove_dir_all(&staging);
    outcome
}

/// Writes every file into `dir`: the tables (gathering the light figures as
/// the frames go by), the previews, then the check report.
fn write_all(
    prepared: &Prepared,
    settings: &CheckSettings,
    opts: &CompileOptions,
    dir: &Path,
) -> Result<(CompileSummary, CheckReport), CompileError> {
    let (show, lights) = (prepared.show(), prepared.lights());
    // Within u32: `check_limits` has passed.
    let frames = show.frame_count() as u32;
    // The checks of the motion alone run while the tables are written.
    let (written, motion) = rayon::join(
        || write_tables(prepared, frames, opts.header_form, dir),
        // `compile` checked the budget before anything was written.
        || crate::check::motion_figures(prepared, settings),
    );
    let (tables, figures) = written?;
    let motion = motion.map_err(|e| CompileError::Check(e.to_string()))?;
    let report = crate::check::report_of(prepared, motion, figures, settings);
    let previews = if opts.previews {
        preview::write_previews(prepared, dir, &opts.preview)?
            .iter()
            .filter_map(|p| p.file_name().map(|n| n.to_string_lossy().into_owned()))
            .collect()
    } else {
        Vec::new()
    };
    let worst_landing = lights
        .landings
        .iter()
        .max_by(|a, b| a.error_mm.total_cmp(&b.error_mm))
        .cloned();
    let summary = CompileSummary {
        title: show.title.clone(),
        frame_rate_hz: show.frame_rate_hz,
        frames: u64::from(frames),
        duration_s: show.end_s(),
        tables,
        previews,
        worst_landing,
        warnings: report.warnings.len(),
        dimmed: (0..show.props.len())
            .filter_map(|i| {
                let k = prepared.brightness_scale(i).filter(|&k| k < 1.0)?;
                Some((show.props[i].name.clone(), k))
            })
            .collect(),
    };
    write_report(&dir.join("report.json"), &summary, &report)?;
    Ok((summary, report))
}

/// Writes `report.json`: the check report with the tables and previews added.
fn write_report(
    path: &Path,
    summary: &CompileSummary,
    report: &CheckReport,
) -> Result<(), CompileError> {
    let io =
        |e: std::io::Error| CompileError::Io(format!("cannot write `{}`: {e}", path.display()));
    let mut value = serde_json::to_value(report).map_err(|e| CompileError::Io(e.to_string()))?;
    if let Some(obj) = value.as_object_mut() {
        let tables: serde_json::Map<String, serde_json::Value> = summary
            .tables
            .iter()
            .map(|(name, t)| (name.clone(), serde_json::to_value(t).unwrap_or_default()))
            .collect();
        obj.insert(
            "compile".into(),
            serde_json::json!({
                "frame_rate_hz": summary.frame_rate_hz,
                "frames": summary.frames,
                "duration_s": summary.duration_s,
                "tables": tables,
                "previews": summary.previews,
                "brightness_scale_applied": summary.dimmed.iter().map(|(n, k)| (n.clone(), serde_json::json!(k))).collect::<serde_json::Map<_, _>>(),
            }),
        );
    }
    let mut f = BufWriter::new(File::create(path).map_err(io)?);
    serde_json::to_writer_pretty(&mut f, &value).map_err(|e| CompileError::Io(e.to_string()))?;
    writeln!(f).map_err(io)?;
    f.flush().map_err(io)
}

/// Bytes handed to a [`Background`] writer's thread at a time.
const BACKGROUND_CHUNK: usize = 4 << 20;
/// Chunks waiting for a [`Background`] writer's thread, at most.
const BACKGROUND_QUEUE: usize = 2;
/// Bytes a [`Background`] writer without a thread gathers before it writes.
const HERE_CHUNK: usize = 8 << 10;
/// Props whose files are written by threads of their own (one a file);
/// the files of any further prop are written by the thread that makes their
/// frames, so that a show of many props starts a bounded number of threads.
const THREADED_PROPS: usize = 8;

/// A writer whose bytes are written to `W` in chunks, in order, by a thread
/// of its own (formatting and the operating system's copying of large files
/// then overlap with the work that produces them) or, made with
/// [`Background::here`], by the caller.
struct Background<W: Write + Send + 'static> {
    buf: Vec<u8>,
    chunk: usize,
    /// Where the bytes go without a thread.
    here: Option<W>,
    tx: Option<SyncSender<Vec<u8>>>,
    thread: Option<JoinHandle<std::io::Result<W>>>,
}

impl<W: Write + Send + 'static> Background<W> {
    /// Starts the thread that writes to `inner`.
    fn new(mut inner: W) -> Self {
        let (tx, rx) = sync_channel::<Vec<u8>>(BACKGROUND_QUEUE);
        let thread = std::thread::spawn(move || {
            for chunk in rx {
                inner.write_all(&chunk)?;
            }
            inner.flush()?;
            Ok(inner)
        });
        Background {
            buf: Vec::with_capacity(BACKGROUND_CHUNK),
            chunk: BACKGROUND_CHUNK,
            here: None,
            tx: Some(tx),
            thread: Some(thread),
        }
    }

    /// Writes to `inner` on the caller's thread, in chunks.
    fn here(inner: W) -> Self {
        Background {
            buf: Vec::with_capacity(HERE_CHUNK),
            chunk: HERE_CHUNK,
            here: Some(inner),
            tx: None,
            thread: None,
        }
    }

    /// [`Background::new`] when `threaded`, else [`Background::here`].
    fn with_thread(inner: W, threaded: bool) -> Self {
        if threaded {
            Background::new(inner)
        } else {
            Background::here(inner)
        }
    }

    fn send(&mut self) -> std::io::Result<()> {
        if let Some(w) = self.here.as_mut() {
            w.write_all(&self.buf)?;
            self.buf.clear();
            return Ok(());
        }
        let chunk = std::mem::replace(&mut self.buf, Vec::with_capacity(self.chunk));
        match self.tx.as_ref() {
            Some(tx) if tx.send(chunk).is_ok() => Ok(()),
            // The thread stopped on an error; `finish` reports it.
            _ => Err(std::io::Error::other("the writing thread stopped")),
        }
    }

    /// Writes what is left, waits for the thread and hands back `W`, or the
    /// first error the thread met.
    fn finish(mut self) -> std::io::Result<W> {
        let sent = if self.buf.is_empty() {
            Ok(())
        } else {
            self.send()
        };
        if let Some(mut w) = self.here.take() {
            sent?;
            w.flush()?;
            return Ok(w);
        }
        self.tx = None;
        let joined = match self.thread.take().map(JoinHandle::join) {
            Some(Ok(r)) => r,
            _ => Err(std::io::Error::other("the writing thread failed")),
        };
        let inner = joined?;
        sent?;
        Ok(inner)
    }
}

impl<W: Write + Send + 'static> Write for Background<W> {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.buf.extend_from_slice(buf);
        if self.buf.len() >= self.chunk {
            self.send()?;
        }
        Ok(buf.len())
    }

    fn flush(&mut self) -> std::io::Result<()> {
        // `W` is flushed when the writer finishes.
        Ok(())
    }
}

impl<W: Write + Send + 'static> Drop for Background<W> {
    fn drop(&mut self) {
        self.tx = None;
        if let Some(t) = self.thread.take() {
            let _ = t.join();
        }
    }
}

/// Where a binary table's bytes go: its file and, for the form the C header
/// embeds, the header's text too (so that the table is encoded once).
struct TableOut {
    file: Background<File>,
    header: Option<Background<CHeaderText<File>>>,
}

impl TableOut {
    /// Finishes the file, and hands back the header's text if it went there.
    fn finish(self) -> std::io::Result<Option<CHeaderText<File>>> {
        self.file.finish()?;
        self.header.map(Background::finish).transpose()
    }
}

impl Write for TableOut {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        self.file.write_all(buf)?;
        if let Some(h) = self.header.as_mut() {
            h.write_all(buf)?;
        }
        Ok(buf.len())
    }

    fn flush(&mut self) -> std::io::Result<()> {
        self.file.flush()?;
        if let Some(h) = self.header.as_mut() {
            h.flush()?;
        }
        Ok(())
    }
}

/// The streaming writers of one prop's four files.
struct PropWriters {
    names: [String; 4],
    leds: usize,
    /// Whether its files are written by threads of their own (for tests).
    #[cfg(test)]
    threaded: bool,
    csv: CsvWriter<Background<File>>,
    full: FullTableWriter<TableOut>,
    compact: CompactTableWriter<TableOut>,
}

impl PropWriters {
    /// Opens the four files of prop `prop` in `dir`.
    fn open(
        show: &Show,
        prop: usize,
        frames: u32,
        header_form: TableForm,
        dir: &Path,
    ) -> Result<PropWriters, CompileError> {
        let threaded = prop < THREADED_PROPS;
        let prop = &show.props[prop];
        let spec = TableSpec {
            frame_rate_hz: show.frame_rate_hz,
            leds: prop.leds,
            order: prop.wire_order,
            frame_count: frames,
        };
        let names = [
            format!("{}.csv", prop.name),
            format!("{}.full.bin", prop.name),
            format!("{}.compact.bin", prop.name),
            format!("{}.h", prop.name),
        ];
        let open = |name: &str| {
            let path = dir.join(name);
            File::create(&path)
                .map_err(|e| CompileError::Io(format!("cannot create `{}`: {e}", path.display())))
        };
        let header = Background::with_thread(
            CHeaderText::new(open(&names[3])?, spec, &prop.name, header_form)?,
            threaded,
        );
        let (mut full_header, mut compact_header) = (None, None);
        match header_form {
            TableForm::Full => full_header = Some(header),
            TableForm::Compact => compact_header = Some(header),
        }
        let full = TableOut {
            file: Background::with_thread(open(&names[1])?, threaded),
            header: full_header,
        };
        let compact = TableOut {
            file: Background::with_thread(open(&names[2])?, threaded),
            header: compact_header,
        };
        Ok(PropWriters {
            csv: CsvWriter::new(Background::with_thread(open(&names[0])?, threaded), spec)?,
            full: FullTableWriter::new(full, spec)?,
            compact: CompactTableWriter::new(compact, spec)?,
            names,
            leds: prop.leds as usize,
            #[cfg(test)]
            threaded,
        })
    }

    /// Writes `n` frames held one after the other in `block`: the CSV and
    /// full table beside the compact table and the C header.
    fn push_block(&mut self, block: &[[u8; 3]], n: usize) -> Result<(), CompileError> {
        let frames = &block[..n * self.leds];
        let leds = self.leds;
        let (csv, full, compact) = (&mut self.csv, &mut self.full, &mut self.compact);
        let (a, b) = rayon::join(
            || -> Result<(), OutputError> {
                for f in frames.chunks(leds) {
                    csv.push_frame(f)?;
                    full.push_frame(f)?;
                }
                Ok(())
            },
            || -> Result<(), OutputError> {
                for f in frames.chunks(leds) {
                    compact.push_frame(f)?;
                }
                Ok(())
            },
        );
        a?;
        b?;
        Ok(())
    }

    /// Finishes the four files.
    fn finish(self, prop: &crate::model::Prop) -> Result<PropTables, CompileError> {
        let info = |name: &String, s: WriteStats| FileInfo {
            file: name.clone(),
            bytes: s.bytes_written,
            crc32: s.crc32.map(|c| format!("0x{c:08x}")),
        };
        let names = &self.names;
        let io = |name: &String, e: std::io::Error| {
            CompileError::Io(format!("cannot write `{name}`: {e}"))
        };
        let (csv_out, csv) = self.csv.finish_into_inner()?;
        csv_out.finish().map_err(|e| io(&names[0], e))?;
        let (full_out, full) = self.full.finish_into_inner()?;
        let full_header = full_out.finish().map_err(|e| io(&names[1], e))?;
        let (compact_out, compact) = self.compact.finish_into_inner()?;
        let compact_header = compact_out.finish().map_err(|e| io(&names[2], e))?;
        let header = full_header
            .or(compact_header)
            .ok_or_else(|| CompileError::Io("the C header was not opened".into()))?;
        let (_, header_bytes) = header.finish()?;
        Ok(PropTables {
            leds: prop.leds,
            wire_order: prop.wire_order.name(),
            csv: FileInfo {
                crc32: None,
                ..info(&names[0], csv)
            },
            full: info(&names[1], full),
            compact: info(&names[2], compact),
            header: FileInfo {
                file: names[3].clone(),
                bytes: header_bytes,
                crc32: None,
            },
        })
    }
}

/// Streams every frame of every prop into its four files, block by block,
/// and gathers the figures the check reads off the frames on the way.
fn write_tables(
    prepared: &Prepared,
    frames: u32,
    header_form: TableForm,
    dir: &Path,
) -> Result<(Vec<(String, PropTables)>, FrameFigures), CompileError> {
    let (show, lights) = (prepared.show(), prepared.lights());
    let mut writers: Vec<PropWriters> = (0..show.props.len())
        .map(|i| PropWriters::open(show, i, frames, header_form, dir))
        .collect::<Result<_, _>>()?;
    let mut tally = LightTally::new(show);
    prepared.for_each_block(|_, n, blocks| {
        let (written, ()) = rayon::join(
            || {
                writers
                    .par_iter_mut()
                    .zip(blocks)
                    .try_for_each(|(w, block)| w.push_block(block, n))
            },
            || {
                if let Some(t) = tally.as_mut() {
                    t.push_block(show, lights, n, blocks);
                }
            },
        );
        written
    })?;
    let tables: Vec<(String, PropTables)> = writers
        .into_iter()
        .zip(&show.props)
        .map(|(w, p)| w.finish(p).map(|t| (p.name.clone(), t)))
        .collect::<Result<_, _>>()?;
    let light = tally.map_or_else(LightScan::default, |t| t.finish(show));
    let figures = FrameFigures {
        light,
        compact_table_bytes: tables.iter().map(|(_, t)| Some(t.compact.bytes)).collect(),
    };
    Ok((tables, figures))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn many_props_start_a_bounded_number_of_writing_threads() {
        // Each prop has four files; a thread for every file of 200 props
        // would be 800 threads (thousands of props exhaust the system's
        // threads and abort the process): only the first THREADED_PROPS
        // props' files get threads of their own.
        let mut text = String::from("[show]\nframe_rate = 10\nbpm = 60\nbeats_per_bar = 1\n");
        for i in 0..200 {
            text += &format!("[prop.p{i}]\ntether_m = 0.5\nanchor_m = [0.0, 1.4, 0.0]\n");
        }
        text += "[pattern.w]\nplane = \"wall\"\nbeats = 1\nhand_radius_m = 0.1\nhead_turns = 1\n";
        text += "[[section]]\nbars = [1, 1]\np0 = \"w\"\n";
        let show = crate::show::parse("many.toml", text).unwrap();
        let dir = std::env::temp_dir().join(format!("glowscore-threads-{}", std::process::id()));
        fs::create_dir_all(&dir).unwrap();
        let writers: Vec<PropWriters> = (0..show.props.len())
            .map(|i| PropWriters::open(&show, i, 10, TableForm::Full, &dir).unwrap())
            .collect();
        let threaded: Vec<usize> = writers
            .iter()
            .enumerate()
            .filter(|(_, w)| w.threaded)
            .map(|(i, _)| i)
            .collect();
        drop(writers);
        let _ = fs::remove_dir_all(&dir);
        assert_eq!(threaded, (0..THREADED_PROPS).collect::<Vec<_>>());
    }

    #[test]
    fn files_written_without_a_thread_hold_the_same_bytes() {
        // Props beyond THREADED_PROPS are written on the frames' thread: two
        // props that play the same (the first and the last of ten) get the
        // same tables, and headers that differ only in the prop's name.
        let mut text = String::from("[show]\nframe_rate = 200\nbpm = 120\nbeats_per_bar = 4\n");
        let n = THREADED_PROPS + 2;
        for i in 0..n {
            text += &format!(
                "[prop.p{i}]\ntether_m = 0.5\nanchor_m = [0.0, 1.4, 0.0]\n\
                 strip = {{ leds = 40, from_m = 0.05, to_m = 0.5 }}\n"
            );
        }
        text += "[pattern.w]\nplane = \"wall\"\nbeats = 4\nhand_radius_m = 0.1\nhead_turns = -3\n";
        text += "[[section]]\nbars = [1, 8]\n";
        for i in 0..n {
            text += &format!("p{i} = \"w\"\n");
        }
        for i in 0..n {
            text += &format!(
                "[[cue]]\nprop = \"p{i}\"\nbars = [1, 8]\nat = \"tip\"\nalong = \"gradient\"\n\
                 colours = [\"gold\", \"teal\", \"crimson\"]\nfade_beats = 0.5\n"
            );
        }
        let show = crate::show::parse("same.toml", text).unwrap();
        let dir = std::env::temp_dir().join(format!("glowscore-here-{}", std::process::id()));
        let mut opts = CompileOptions::new(dir.clone());
        opts.previews = false;
        compile(&Prepared::new(show).unwrap(), &opts).unwrap();
        let last = format!("p{}", n - 1);
        for ext in ["csv", "full.bin", "compact.bin", "h"] {
            let a = fs::read(dir.join(format!("p0.{ext}"))).unwrap();
            let b = fs::read(dir.join(format!("{last}.{ext}"))).unwrap();
            let b = if ext == "h" {
                String::from_utf8(b)
                    .unwrap()
                    .replace(&last, "p0")
                    .replace(&last.to_uppercase(), "P0")
                    .into_bytes()
            } else {
                b
            };
            assert!(a.len() > 1000, "{ext}: {} bytes", a.len());
            assert!(a == b, "p0.{ext} and {last}.{ext} differ");
        }
        let _ = fs::remove_dir_all(&dir);
    }
}

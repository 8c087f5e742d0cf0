//! The files compile writes for each prop, as one list of formats.
//!
//! [`FORMATS`] has one entry per file: its key in `report.json`, its file
//! name and how to open its streaming writer. [`PropFiles`] opens every
//! entry for one prop, takes its frames block by block (the files in
//! parallel) and finishes them; the files of the first [`THREADED_PROPS`]
//! props are written by threads of their own, so that formatting and the
//! operating system's copying of large files overlap with the work that
//! makes the frames. Adding a table format is one file with its writer and
//! one line in [`FORMATS`].

use std::fs::File;
use std::io::Write;
use std::path::Path;
use std::sync::mpsc::{SyncSender, sync_channel};
use std::thread::JoinHandle;

use rayon::prelude::*;
use serde::Serialize;
use serde::ser::SerializeMap;

use super::program::ProgramFile;
use super::{
    CHeaderText, CompactTableWriter, CsvWriter, FrameWriter, FullTableWriter, Mark, OutputError,
    TableForm, TableSpec, WriteStats,
};

/// What opening a prop's file needs to know.
#[derive(Clone, Copy, Debug)]
pub struct Opening<'a> {
    /// The table's size and byte order.
    pub spec: TableSpec,
    /// The prop's name (the C header's identifiers come from it).
    pub prop: &'a str,
    /// Which binary form the C header embeds.
    pub header_form: TableForm,
    /// The resync marks the binary tables carry (`output::resync_marks`;
    /// the program form has them already).
    pub marks: &'a [Mark],
    /// The prop's program form, made from the prepared show before the
    /// frames (`output::program::encode`); its writer only stores it.
    pub program: &'a [u8],
    /// Keys of the formats not to write (only the text forms, `csv` and
    /// `header`, may be left out).
    pub skip: &'a [String],
}

/// One file of a prop being written: frames in, its figures out.
pub trait PropFile: Send {
    /// Takes the next frames, one after the other in `frames`.
    fn push_frames(&mut self, frames: &[[u8; 3]], leds: usize) -> Result<(), OutputError>;
    /// Completes the file and reports its size (and CRC for binary tables).
    fn finish(self: Box<Self>) -> Result<Finished, OutputError>;
}

/// One kind of file compile writes per prop.
#[derive(Clone, Copy, Debug)]
pub struct Format {
    /// Its key under the prop's entry in `report.json`'s tables.
    pub key: &'static str,
    /// What follows the prop's name in the file name (`".csv"`).
    pub suffix: &'static str,
    /// Whether its CRC-32 goes into `report.json` (binary tables).
    pub reports_crc: bool,
    /// The binary form it writes, if any: the C header embeds the bytes of
    /// the format whose form it embeds as they are written, so that the
    /// table is encoded once.
    pub form: Option<TableForm>,

    /// Opens the streaming writer into `out`; `None` for the C header,
    /// whose text the format it embeds writes.
    pub open: Option<OpenFn>,
}

/// How a [`Format`] opens its writer.
pub type OpenFn = fn(out: Output, opening: &Opening) -> Result<Box<dyn PropFile>, OutputError>;

/// Every file compile writes per prop, in the order of `report.json`.
pub const FORMATS: [Format; 5] = [
    Format {
        key: "csv",
        suffix: ".csv",
        reports_crc: false,
        form: None,
        open: Some(|out, o| Ok(Box::new(CsvWriter::new(out, o.spec)?))),
    },
    Format {
        key: "full",
        suffix: ".full.bin",
        reports_crc: true,
        form: Some(TableForm::Full),
        open: Some(|out, o| Ok(Box::new(FullTableWriter::with_marks(out, o.spec, o.marks)?))),
    },
    Format {
        key: "compact",
        suffix: ".compact.bin",
        reports_crc: true,
        form: Some(TableForm::Compact),
        open: Some(|out, o| {
            Ok(Box::new(CompactTableWriter::with_marks(
                out, o.spec, o.marks,
            )?))
        }),
    },
    Format {
        key: "program",
        suffix: ".prog.bin",
        reports_crc: true,
        form: Some(TableForm::Program),
        open: Some(|out, o| Ok(Box::new(ProgramFile::new(out, o.program.to_vec())))),
    },
    Format {
        key: "header",
        suffix: ".h",
        reports_crc: false,
        form: None,
        // Its text is written by the format it embeds (see `Output`).
        open: None,
    },
];

/// The output a [`PropFile`] writes to: its file, in chunks, by a thread of
/// its own or by the caller; and, for the binary form the C header embeds,
/// the header's text too.
pub struct Output {
    file: Background<File>,
    header: Option<Background<CHeaderText<File>>>,
}

impl Output {
    /// Finishes the file, and the header's text if it went there: its size.
    pub(crate) fn finish(self) -> std::io::Result<Option<u64>> {
        self.file.finish()?;
        match self.header.map(Background::finish).transpose()? {
            Some(text) => Ok(Some(text.finish().map_err(std::io::Error::other)?.1)),
            None => Ok(None),
        }
    }
}

impl Write for Output {
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

/// What a finished [`PropFile`] reports.
#[derive(Clone, Copy, Debug, Default)]
pub struct Finished {
    /// The file's own figures.
    pub stats: WriteStats,
    /// Characters of C header text written beside it, if it fed the header.
    pub header_bytes: Option<u64>,
}

macro_rules! prop_file {
    ($ty:ident) => {
        impl PropFile for $ty<Output> {
            fn push_frames(&mut self, frames: &[[u8; 3]], leds: usize) -> Result<(), OutputError> {
                frames.chunks(leds).try_for_each(|f| self.push_frame(f))
            }
            fn finish(self: Box<Self>) -> Result<Finished, OutputError> {
                let (out, stats) = (*self).finish_into_inner()?;
                let header_bytes = out.finish()?;
                Ok(Finished {
                    stats,
                    header_bytes,
                })
            }
        }
    };
}
prop_file!(CsvWriter);
prop_file!(FullTableWriter);
prop_file!(CompactTableWriter);

/// The C header's place in the list: its text is written by the format it
/// embeds, so it takes no frames itself.
struct Fed;

impl PropFile for Fed {
    fn push_frames(&mut self, _: &[[u8; 3]], _: usize) -> Result<(), OutputError> {
        Ok(())
    }
    fn finish(self: Box<Self>) -> Result<Finished, OutputError> {
        Ok(Finished::default())
    }
}

/// One file written, and its size.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FileInfo {
    /// File name inside the output folder.
    pub file: String,
    /// Size in bytes.
    pub bytes: u64,
    /// CRC-32 stored in a binary table's trailer.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub crc32: Option<String>,
}

/// The files of one prop, in [`FORMATS`] order.
#[derive(Clone, Debug, PartialEq)]
pub struct PropTables {
    /// LEDs per frame.
    pub leds: u32,
    /// Byte order on the wire (binary forms and C header).
    pub wire_order: &'static str,
    /// One entry per format: its key and its file.
    pub files: Vec<(&'static str, FileInfo)>,
}

impl PropTables {
    /// The file of the format with key `key` (`"csv"`, `"full"`, ...).
    pub fn file(&self, key: &str) -> Option<&FileInfo> {
        self.files.iter().find(|(k, _)| *k == key).map(|(_, f)| f)
    }
}

impl Serialize for PropTables {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut m = s.serialize_map(Some(2 + self.files.len()))?;
        m.serialize_entry("leds", &self.leds)?;
        m.serialize_entry("wire_order", self.wire_order)?;
        for (k, f) in &self.files {
            m.serialize_entry(k, f)?;
        }
        m.end()
    }
}

/// A file that could not be written, and why.
#[derive(Debug, thiserror::Error)]
#[error("cannot write `{file}`: {source}")]
pub struct FileError {
    /// The file's name in the output folder.
    pub file: String,
    /// The cause.
    #[source]
    pub source: OutputError,
}

/// The streaming writers of every file of one prop.
pub struct PropFiles {
    files: Vec<(Format, String, Box<dyn PropFile>)>,
    leds: usize,
    /// Whether its files are written by threads of their own.
    threaded: bool,
}

impl PropFiles {
    /// Opens every format's file for prop number `index` (its files get
    /// threads of their own when `index < THREADED_PROPS`) in `dir`.
    pub fn open(dir: &Path, index: usize, opening: &Opening) -> Result<PropFiles, FileError> {
        let threaded = index < THREADED_PROPS;
        let name_of = |format: &Format| format!("{}{}", opening.prop, format.suffix);
        let create = |name: &str| {
            File::create(dir.join(name)).map_err(|e| FileError {
                file: name.to_string(),
                source: e.into(),
            })
        };
        // The header's text opens first: the format it embeds writes it.
        let mut header = None;
        let wanted = |f: &Format| !opening.skip.iter().any(|k| k == f.key);
        for format in FORMATS.iter().filter(|f| f.open.is_none() && wanted(f)) {
            let name = name_of(format);
            let text = CHeaderText::new(
                create(&name)?,
                opening.spec,
                opening.prop,
                opening.header_form,
            )
            .map_err(|source| FileError {
                file: name.clone(),
                source,
            })?;
            header = Some(Background::with_thread(text, threaded));
        }
        let mut files = Vec::with_capacity(FORMATS.len());
        for format in FORMATS.into_iter().filter(wanted) {
            let name = name_of(&format);
            let Some(open) = format.open else {
                files.push((format, name, Box::new(Fed) as Box<dyn PropFile>));
                continue;
            };
            let out = Output {
                file: Background::with_thread(create(&name)?, threaded),
                header: if format.form == Some(opening.header_form) {
                    header.take()
                } else {
                    None
                },
            };
            let writer = open(out, opening).map_err(|source| FileError {
                file: name.clone(),
                source,
            })?;
            files.push((format, name, writer));
        }
        Ok(PropFiles {
            files,
            leds: opening.spec.leds as usize,
            threaded,
        })
    }

    /// Whether its files are written by threads of their own.
    pub fn threaded(&self) -> bool {
        self.threaded
    }

    /// Writes `n` frames held one after the other in `block` to every file.
    pub fn push_block(&mut self, block: &[[u8; 3]], n: usize) -> Result<(), FileError> {
        let frames = &block[..n * self.leds];
        let leds = self.leds;
        self.files.par_iter_mut().try_for_each(|(_, name, w)| {
            w.push_frames(frames, leds).map_err(|source| FileError {
                file: name.clone(),
                source,
            })
        })
    }

    /// Finishes every file.
    pub fn finish(self, leds: u32, wire_order: &'static str) -> Result<PropTables, FileError> {
        let mut files = Vec::with_capacity(self.files.len());
        let mut header_bytes = None;
        for (format, name, w) in self.files {
            let done = w.finish().map_err(|source| FileError {
                file: name.clone(),
                source,
            })?;
            header_bytes = header_bytes.or(done.header_bytes);
            files.push((
                format,
                FileInfo {
                    file: name,
                    bytes: done.stats.bytes_written,
                    crc32: done
                        .stats
                        .crc32
                        .filter(|_| format.reports_crc)
                        .map(|c| format!("0x{c:08x}")),
                },
            ));
        }
        let files = files
            .into_iter()
            .map(|(format, mut info)| {
                if format.open.is_none() {
                    info.bytes = header_bytes.unwrap_or(0);
                }
                (format.key, info)
            })
            .collect();
        Ok(PropTables {
            leds,
            wire_order,
            files,
        })
    }
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
pub const THREADED_PROPS: usize = 8;

/// A writer whose bytes are written to `W` in chunks, in order, by a thread
/// of its own (formatting and the operating system's copying of large files
/// then overlap with the work that produces them) or, made with
/// [`Background::here`], by the caller.
pub struct Background<W: Write + Send + 'static> {
    buf: Vec<u8>,
    chunk: usize,
    /// Where the bytes go without a thread.
    here: Option<W>,
    tx: Option<SyncSender<Vec<u8>>>,
    thread: Option<JoinHandle<std::io::Result<W>>>,
}

impl<W: Write + Send + 'static> Background<W> {
    /// Starts the thread that writes to `inner`.
    pub fn new(mut inner: W) -> Self {
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
    pub fn here(inner: W) -> Self {
        Background {
            buf: Vec::with_capacity(HERE_CHUNK),
            chunk: HERE_CHUNK,
            here: Some(inner),
            tx: None,
            thread: None,
        }
    }

    /// [`Background::new`] when `threaded`, else [`Background::here`].
    pub fn with_thread(inner: W, threaded: bool) -> Self {
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
            // The thread stopped on an error: that error is the cause.
            _ => {
                self.tx = None;
                Err(match self.thread.take().map(JoinHandle::join) {
                    Some(Ok(Err(e))) => e,
                    _ => std::io::Error::other("the writing thread failed"),
                })
            }
        }
    }

    /// Writes what is left, waits for the thread and hands back `W`, or the
    /// first error the thread met.
    pub fn finish(mut self) -> std::io::Result<W> {
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

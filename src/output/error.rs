//! Errors of the table writers and of the binary table reader.

use thiserror::Error;

/// Why a table could not be written.
#[derive(Debug, Error)]
pub enum OutputError {
    /// The output could not be written to.
    #[error("{}", crate::diag::io_phrase(.0))]
    Io(#[from] std::io::Error),
    /// The prop's show cannot be stored in the program form.
    #[error(transparent)]
    Program(#[from] super::program::ProgramError),
    /// The table description cannot be stored (zero frame rate, no LEDs, too large).
    #[error("invalid table description: {0}")]
    BadSpec(String),
    /// A frame had a different number of LEDs than the table.
    #[error("frame {frame} has {got} LEDs, the table has {expected}")]
    WrongLedCount {
        /// Index of the frame, from 0.
        frame: u32,
        /// LEDs per frame in the table description.
        expected: u32,
        /// LEDs in the frame pushed.
        got: usize,
    },
    /// More frames were pushed than the table description announced.
    #[error("too many frames: the table holds {expected}")]
    TooManyFrames {
        /// Frames announced in the table description.
        expected: u32,
    },
    /// `finish` was called before every announced frame was pushed.
    #[error("the table holds {expected} frames but only {got} were given")]
    MissingFrames {
        /// Frames announced in the table description.
        expected: u32,
        /// Frames pushed.
        got: u32,
    },
}

/// Why bytes are not a valid binary frame table (full or compact).
#[derive(Clone, Debug, PartialEq, Eq, Error)]
pub enum ReadError {
    /// Fewer bytes than a header and trailer need.
    #[error("the table is too short ({0} bytes)")]
    TooShort(usize),
    /// The first four bytes are not a known magic.
    #[error("not a glowscore table (magic {0:02x?})")]
    BadMagic([u8; 4]),
    /// A format version this reader does not know.
    #[error("unsupported table version {0}")]
    Version(u16),
    /// A header field is out of its range or inconsistent.
    #[error("bad header field `{0}`")]
    BadHeader(&'static str),
    /// A flag bit that must be understood is set but unknown.
    #[error("unknown required flags {0:#010x}")]
    UnknownFlags(u32),
    /// The byte count does not match the header and trailer.
    #[error("the table should be {expected} bytes long but is {actual}")]
    Length {
        /// Length implied by header and trailer.
        expected: u64,
        /// Length given.
        actual: u64,
    },
    /// The CRC-32 of the table does not match its trailer.
    #[error("CRC mismatch: stored {stored:#010x}, computed {computed:#010x}")]
    Crc {
        /// CRC-32 stored in the trailer.
        stored: u32,
        /// CRC-32 of the bytes read.
        computed: u32,
    },
    /// The resync marks of a version-2 header are inconsistent.
    #[error("bad resync marks: {0}")]
    BadMarks(&'static str),
    /// The segment index of a compact table is inconsistent.
    #[error("bad segment index: {0}")]
    BadIndex(&'static str),
    /// A frame number past the end of the table.
    #[error("frame {frame} is past the end ({count} frames)")]
    FrameOutOfRange {
        /// Frame asked for.
        frame: u32,
        /// Frames in the table.
        count: u32,
    },
    /// The caller's buffer is smaller than one frame.
    #[error("output buffer holds {got} bytes, a frame needs {need}")]
    BufferTooSmall {
        /// Bytes of one frame.
        need: usize,
        /// Bytes offered.
        got: usize,
    },
}

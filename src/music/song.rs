//! A show's song, heard once: the file's size and checksum, its length and
//! its beat grid (or why it has none).

use std::io::Read;
use std::path::Path;

use super::{Analysis, BeatError, MusicError, Options, analyse, decode_file};

/// A song file, decoded and analysed.
#[derive(Clone, Debug)]
pub struct Song {
    /// The file's name, without its folder.
    pub file_name: String,
    /// The file's size, bytes.
    pub bytes: u64,
    /// CRC-32 of the file's bytes (IEEE 802.3, the checksum of zip and
    /// PNG), so that a player can tell which song a compile was made for.
    pub crc32: u32,
    /// Length of the decoded audio, seconds.
    pub duration_s: f64,
    /// Samples per second.
    pub rate: u32,
    /// The song's beat grid, or why none was found (a song without a
    /// steady beat is still a song).
    pub beats: Result<Analysis, BeatError>,
}

/// CRC-32 and size of the file at `path`, read in blocks.
fn checksum(path: &Path) -> Result<(u32, u64), MusicError> {
    let mut f = std::fs::File::open(path).map_err(MusicError::read(path))?;
    let mut h = crc32fast::Hasher::new();
    let mut buf = vec![0u8; 1 << 16];
    let mut bytes = 0u64;
    loop {
        let n = f.read(&mut buf).map_err(MusicError::read(path))?;
        if n == 0 {
            break;
        }
        h.update(&buf[..n]);
        bytes += n as u64;
    }
    Ok((h.finalize(), bytes))
}

/// Reads, decodes and analyses the song at `path`. A file that cannot be
/// read or decoded is an error; a song whose beat cannot be found is not
/// (its [`Song::beats`] says why).
pub fn hear(path: &Path, opts: &Options) -> Result<Song, MusicError> {
    let audio = decode_file(path)?;
    let (crc32, bytes) = checksum(path)?;
    let file_name = path.file_name().map_or_else(
        || path.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    );
    Ok(Song {
        file_name,
        bytes,
        crc32,
        duration_s: audio.duration_s(),
        rate: audio.rate,
        beats: analyse(&audio, opts),
    })
}

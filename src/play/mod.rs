//! The play page: one self-contained HTML file that shows the show moving,
//! frame by frame, with its song or a beat click, and the watch loop that
//! serves it and pushes every saved change.
//!
//! The page is `page.html` with `page.css`, `page.js` and the show's data
//! ([`data::ShowData`], JSON) put inside it; it loads nothing from the
//! network (a Content-Security-Policy of `default-src 'none'` with inline
//! allowances). The page evaluates the motion itself from the closed-form
//! terms and reads the frame colours from run-length coded LED bytes, all
//! taken from [`Prepared`].

pub mod data;
pub mod watch;

use std::io::Write;
use std::path::{Path, PathBuf};

use crate::prepared::Prepared;

pub use data::{DataError, ShowData, show_data};

const TEMPLATE: &str = include_str!("page.html");
const STYLE: &str = include_str!("page.css");
const SCRIPT: &str = include_str!("page.js");

/// The largest song a page embeds, bytes (base64 makes it a third larger).
pub const MAX_SONG_BYTES: u64 = 200 * 1024 * 1024;

/// What goes into a page besides the show.
#[derive(Clone, Copy, Debug, Default)]
pub struct Page<'a> {
    /// The song to embed (the show's `music`), played as the clock.
    pub song: Option<&'a Path>,
    /// A page served by the watch loop: it listens for new shows on
    /// `/events` (its policy allows connections to its own server).
    pub live: bool,
}

/// Why a page could not be made or written.
#[derive(Debug, thiserror::Error)]
pub enum PlayError {
    /// The show's data is too large for a page.
    #[error("{0}")]
    Data(#[from] DataError),
    /// The song could not be read.
    #[error("cannot read the song {}: {source}", path.display())]
    Song {
        /// The song file.
        path: PathBuf,
        /// The cause.
        source: std::io::Error,
    },
    /// The song is larger than [`MAX_SONG_BYTES`].
    #[error("the song {} is {bytes} bytes, more than the {MAX_SONG_BYTES} a page embeds", path.display())]
    SongTooLarge {
        /// The song file.
        path: PathBuf,
        /// Its size.
        bytes: u64,
    },
    /// The page could not be written.
    #[error("cannot write {}: {source}", path.display())]
    Write {
        /// The page file.
        path: PathBuf,
        /// The cause.
        source: std::io::Error,
    },
}

/// The MIME type of a song, from its file name's extension.
pub fn song_mime(path: &Path) -> &'static str {
    let ext = path
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase);
    match ext.as_deref() {
        Some("wav") => "audio/wav",
        Some("flac") => "audio/flac",
        Some("ogg" | "oga") => "audio/ogg",
        Some("mp3") => "audio/mpeg",
        _ => "application/octet-stream",
    }
}

/// The show's data as JSON safe to put inside a `<script>` element (every
/// `<` written as `\u003c`, which JSON reads back as `<`).
pub fn data_json(data: &ShowData) -> String {
    let json = serde_json::to_string(data).expect("the show data serialises");
    json.replace('<', "\\u003c")
}

/// Text safe inside HTML elements and attributes.
fn escape_html(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

/// The page's Content-Security-Policy: nothing from anywhere, inline script
/// and style, the song from a blob; a live page may also connect to its
/// own server.
pub fn policy(live: bool) -> String {
    let connect = if live { "; connect-src 'self'" } else { "" };
    format!(
        "default-src 'none'; script-src 'unsafe-inline'; style-src 'unsafe-inline'; media-src blob:; img-src data:{connect}"
    )
}

/// A page made: its text and the show's data in it (JSON).
#[derive(Clone, Debug)]
pub struct Built {
    /// The whole page.
    pub html: String,
    /// The show's data, as the page's event stream sends it.
    pub data_json: String,
}

/// The whole page for `prepared`.
pub fn page_html(prepared: &Prepared, page: &Page) -> Result<Built, PlayError> {
    let mut data = show_data(prepared)?;
    let song = match page.song {
        Some(path) => {
            let bytes = std::fs::metadata(path)
                .map_err(|source| PlayError::Song {
                    path: path.to_path_buf(),
                    source,
                })?
                .len();
            if bytes > MAX_SONG_BYTES {
                return Err(PlayError::SongTooLarge {
                    path: path.to_path_buf(),
                    bytes,
                });
            }
            let raw = std::fs::read(path).map_err(|source| PlayError::Song {
                path: path.to_path_buf(),
                source,
            })?;
            data.song = Some(format!("{}-{:08x}", raw.len(), crc32fast::hash(&raw)));
            Some((song_mime(path), data::base64(&raw)))
        }
        None => None,
    };
    let data_json = data_json(&data);
    let html = assemble(&data_json, &data.title, song, page.live);
    Ok(Built { html, data_json })
}

fn assemble(json: &str, title: &str, song: Option<(&str, String)>, live: bool) -> String {
    let song_el = match song {
        Some((mime, b64)) => {
            format!(
                "<script type=\"application/octet-stream\" id=\"song\" data-mime=\"{mime}\">{b64}</script>"
            )
        }
        None => String::new(),
    };
    let policy = policy(live);
    let title = escape_html(title);
    fill(
        TEMPLATE,
        &[
            ("POLICY", &policy),
            ("TITLE", &title),
            ("LIVE", if live { "true" } else { "false" }),
            ("STYLE", STYLE),
            ("SONG", &song_el),
            ("DATA", json),
            ("SCRIPT", SCRIPT),
        ],
    )
}

/// Replaces each `{{KEY}}` of `template` by its value, in one pass over the
/// template (a value is never searched for keys).
fn fill(template: &str, values: &[(&str, &str)]) -> String {
    let mut out =
        String::with_capacity(template.len() + values.iter().map(|v| v.1.len()).sum::<usize>());
    let mut rest = template;
    while let Some(i) = rest.find("{{") {
        out.push_str(&rest[..i]);
        let after = &rest[i + 2..];
        match after.find("}}").and_then(|j| {
            let key = &after[..j];
            values.iter().find(|v| v.0 == key).map(|v| (j, v.1))
        }) {
            Some((j, value)) => {
                out.push_str(value);
                rest = &after[j + 2..];
            }
            None => {
                out.push_str("{{");
                rest = after;
            }
        }
    }
    out.push_str(rest);
    out
}

/// Writes `html` to `path` atomically (a temporary file beside it, renamed).
pub fn write_page(path: &Path, html: &str) -> Result<(), PlayError> {
    let err = |source| PlayError::Write {
        path: path.to_path_buf(),
        source,
    };
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = path
        .file_name()
        .map_or_else(|| "page.html".into(), |n| n.to_string_lossy().into_owned());
    let tmp = dir.join(format!(".{name}.{}.tmp", std::process::id()));
    let result = std::fs::File::create(&tmp)
        .and_then(|mut f| {
            f.write_all(html.as_bytes())?;
            f.sync_all()
        })
        .and_then(|()| std::fs::rename(&tmp, path));
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result.map_err(err)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_template_is_filled_in_one_pass() {
        let t = "a{{X}}b{{Y}}c{{Z}}";
        assert_eq!(fill(t, &[("X", "{{Y}}"), ("Y", "2")]), "a{{Y}}b2c{{Z}}");
    }

    #[test]
    fn html_text_is_escaped() {
        assert_eq!(
            escape_html("<a href=\"x\">Tom & 'Jo'</a>"),
            "&lt;a href=&quot;x&quot;&gt;Tom &amp; &#39;Jo&#39;&lt;/a&gt;"
        );
    }

    #[test]
    fn the_policy_allows_no_network_source() {
        let p = policy(false);
        assert!(p.starts_with("default-src 'none'"));
        assert!(!p.contains("http") && !p.contains("connect-src"));
        assert!(policy(true).ends_with("connect-src 'self'"));
    }

    #[test]
    fn songs_get_their_mime_type() {
        assert_eq!(song_mime(Path::new("a/b.WAV")), "audio/wav");
        assert_eq!(song_mime(Path::new("x.mp3")), "audio/mpeg");
        assert_eq!(song_mime(Path::new("x.ogg")), "audio/ogg");
    }
}

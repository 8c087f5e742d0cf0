//! `glowscore play`: the play page, written to a file or served by the
//! watch loop, which rebuilds it on every save of the show, its pictures or
//! its song.

use std::collections::BTreeSet;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::AtomicBool;
use std::sync::mpsc;
use std::time::{Duration, Instant};

use super::Failure;
use crate::model::Show;
use crate::play::{self, Built, Page, watch};
use crate::prepared::Prepared;

/// Quiet time after a change before the show is rebuilt: an editor's save
/// (write, rename, touch) comes as several events.
pub const DEBOUNCE: Duration = Duration::from_millis(60);
/// Longest wait for quiet while changes keep coming.
const DEBOUNCE_MAX: Duration = Duration::from_millis(1000);

/// The song a page embeds: `song` when given, else the show's own
/// (`[show] music`, read beside the show file).
pub fn song_of(show: &Show, song: Option<&Path>) -> Option<PathBuf> {
    song.map(Path::to_path_buf)
        .or_else(|| show.music.as_ref().map(|m| m.path.clone()))
}

fn build(show: &Path, song: Option<&Path>, live: bool) -> Result<(Prepared, Built), Failure> {
    let prepared = super::prepare(show)?;
    let song = song_of(prepared.show(), song);
    let built = play::page_html(
        &prepared,
        &Page {
            song: song.as_deref(),
            live,
        },
    )?;
    Ok((prepared, built))
}

/// Writes the play page of the show at `show` to `out` (atomically); a line
/// about it goes to `log`.
pub fn run(
    show: &Path,
    out: &Path,
    song: Option<&Path>,
    log: &mut dyn Write,
) -> Result<(), Failure> {
    let (prepared, built) = build(show, song, false)?;
    play::write_page(out, &built.html)?;
    writeln!(
        log,
        "{}: the play page of {} frames, {} bytes",
        out.display(),
        prepared.frame_count(),
        built.html.len()
    )
    .map_err(Failure::output("the summary"))
}

/// The files a rebuild depends on: the show, its pictures, its song.
fn inputs(show_path: &Path, prepared: Option<&Prepared>, song: Option<&Path>) -> BTreeSet<PathBuf> {
    let mut files = BTreeSet::new();
    files.insert(show_path.to_path_buf());
    let dir = show_path.parent().unwrap_or(Path::new("."));
    if let Some(p) = prepared {
        for cue in &p.show().cues {
            if let Some(painting) = cue.painting() {
                files.insert(absolute(&dir.join(&painting.file)));
            }
        }
        if let Some(s) = song_of(p.show(), song) {
            files.insert(absolute(&s));
        }
    } else if let Some(s) = song {
        files.insert(absolute(s));
    }
    files
}

/// `path` made absolute with its folder's symbolic links resolved (the form
/// the file watcher reports), the file itself need not exist.
fn absolute(path: &Path) -> PathBuf {
    let name = path.file_name().map(PathBuf::from).unwrap_or_default();
    let dir = path
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    match dir.canonicalize() {
        Ok(d) => d.join(name),
        Err(_) => path.to_path_buf(),
    }
}

/// Serves the play page of `show` on 127.0.0.1 at `port` (0: any free
/// port) and rebuilds it on every save; prints the address and every
/// rebuild to `log`. Runs until the process is stopped (Ctrl-C).
pub fn watch_loop(
    show: &Path,
    port: u16,
    song: Option<&Path>,
    log: &mut dyn Write,
) -> Result<(), Failure> {
    let show = absolute(show);
    let (prepared, built) = build(&show, song, true)?;
    let hub = watch::Hub::new(built.html, built.data_json);
    let listener = watch::bind(port).map_err(|e| {
        Failure::Option(if e.kind() == std::io::ErrorKind::AddrInUse {
            format!(
                "port {port} on 127.0.0.1 is in use by another program: choose another with --port, or leave --port out to let the system pick a free one"
            )
        } else {
            format!("cannot listen on 127.0.0.1:{port}: {e}")
        })
    })?;
    let addr = listener
        .local_addr()
        .map_err(Failure::output("the address"))?;
    // The files are watched before the page is served: a save made as
    // soon as the page is open is seen.
    let (tx, rx) = mpsc::channel();
    let mut watcher = notify::recommended_watcher(move |ev: notify::Result<notify::Event>| {
        // Reading a file is an event too (the rebuild's own reads): only
        // changes count.
        if let Ok(ev) = ev
            && !ev.kind.is_access()
            && !ev.kind.is_other()
        {
            let _ = tx.send(ev.paths);
        }
    })
    .map_err(|e| Failure::Option(format!("cannot watch files: {e}")))?;
    let mut files = inputs(&show, Some(&prepared), song);
    let mut dirs = BTreeSet::new();
    rewatch(&mut watcher, &files, &mut dirs);
    let stop = Arc::new(AtomicBool::new(false));
    {
        let hub = Arc::clone(&hub);
        let stop = Arc::clone(&stop);
        std::thread::spawn(move || watch::serve(listener, hub, stop));
    }
    writeln!(
        log,
        "serving the play page of {} at http://{addr}/ (Ctrl-C stops)",
        show.display()
    )
    .map_err(Failure::output("the watch log"))?;

    loop {
        let Ok(paths) = rx.recv() else { return Ok(()) };
        if !paths.iter().any(|p| files.contains(p)) {
            continue;
        }
        // Wait for quiet: the save's last event.
        let first = Instant::now();
        while first.elapsed() < DEBOUNCE_MAX {
            match rx.recv_timeout(DEBOUNCE) {
                Ok(_) => continue,
                Err(mpsc::RecvTimeoutError::Timeout) => break,
                Err(mpsc::RecvTimeoutError::Disconnected) => return Ok(()),
            }
        }
        let started = Instant::now();
        match build(&show, song, true) {
            Ok((prepared, built)) => {
                let v = hub.publish_show(built.html, built.data_json);
                files = inputs(&show, Some(&prepared), song);
                rewatch(&mut watcher, &files, &mut dirs);
                // A closed terminal does not stop the server.
                let _ = writeln!(
                    log,
                    "rebuilt in {} ms (version {v})",
                    started.elapsed().as_millis()
                );
            }
            Err(e) => {
                let text = e.to_string();
                let v = hub.publish_errors(text.clone());
                let _ = write!(log, "{text}");
                let _ = writeln!(
                    log,
                    "the show has errors; the page keeps the last good show (version {v})"
                );
            }
        }
    }
}

/// Watches the folder of every file in `files` (editors replace a file by
/// renaming a new one over it, which a watch on the file itself loses).
fn rewatch(
    watcher: &mut impl notify::Watcher,
    files: &BTreeSet<PathBuf>,
    dirs: &mut BTreeSet<PathBuf>,
) {
    for f in files {
        if let Some(d) = f.parent()
            && !dirs.contains(d)
            && watcher
                .watch(d, notify::RecursiveMode::NonRecursive)
                .is_ok()
        {
            dirs.insert(d.to_path_buf());
        }
    }
}

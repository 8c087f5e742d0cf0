//! `glowscore play SHOW --watch`: the server answers only its page and its
//! event stream (server-sent events, WHATWG HTML section 9.2), on the
//! loopback address; a save with errors sends the located errors and keeps
//! the last good show; a fix sends the new show; quick saves never serve a
//! half-written show.

use std::io::{BufRead, BufReader, Read, Write};
use std::net::TcpStream;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

use crate::play::{repo, tmp};

/// The server, stopped when dropped (by its own process id).
struct Server {
    child: Child,
    addr: String,
}

impl Drop for Server {
    fn drop(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

fn start(show: &Path) -> Server {
    start_on(show, 0)
}

fn start_on(show: &Path, port: u16) -> Server {
    let mut child = Command::new(env!("CARGO_BIN_EXE_glowscore"))
        .args(["play"])
        .arg(show)
        .args(["--watch", "--port", &port.to_string()])
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let mut line = String::new();
    let mut out = BufReader::new(child.stdout.take().unwrap());
    out.read_line(&mut line).unwrap();
    // Keep reading the log, so that the server's writes never fail.
    std::thread::spawn(move || {
        let mut sink = String::new();
        while out.read_line(&mut sink).is_ok_and(|n| n > 0) {
            sink.clear();
        }
    });
    let at = line
        .find("http://")
        .unwrap_or_else(|| panic!("no address in {line:?}"));
    let addr = line[at + 7..].split('/').next().unwrap().trim().to_string();
    assert!(addr.starts_with("127.0.0.1:"), "{addr}");
    Server { child, addr }
}

/// One request; returns the status line and the body.
fn get(addr: &str, path: &str, host: &str) -> (String, String) {
    let mut s = TcpStream::connect(addr).unwrap();
    write!(
        s,
        "GET {path} HTTP/1.1\r\nHost: {host}\r\nConnection: close\r\n\r\n"
    )
    .unwrap();
    let mut text = String::new();
    s.read_to_string(&mut text).unwrap();
    let status = text.lines().next().unwrap_or("").to_string();
    let body = text
        .split_once("\r\n\r\n")
        .map(|x| x.1.to_string())
        .unwrap_or_default();
    (status, body)
}

/// An open event stream.
struct Events {
    reader: BufReader<TcpStream>,
}

/// One event: its id, name and data.
#[derive(Debug)]
struct Event {
    id: u64,
    name: String,
    data: String,
}

impl Events {
    fn open(addr: &str) -> Events {
        let mut s = TcpStream::connect(addr).unwrap();
        write!(s, "GET /events HTTP/1.1\r\nHost: {addr}\r\n\r\n").unwrap();
        s.set_read_timeout(Some(Duration::from_secs(30))).unwrap();
        let mut reader = BufReader::new(s);
        let mut line = String::new();
        reader.read_line(&mut line).unwrap();
        assert!(line.starts_with("HTTP/1.1 200"), "{line}");
        Events { reader }
    }

    fn next(&mut self) -> Event {
        let (mut id, mut name, mut data) = (0, String::new(), String::new());
        // The server's keep-alive lines reset the read timeout: the whole
        // wait has its own limit.
        let since = std::time::Instant::now();
        loop {
            assert!(
                since.elapsed() < Duration::from_secs(60),
                "no event within 60 s"
            );
            let mut line = String::new();
            let n = self
                .reader
                .read_line(&mut line)
                .expect("an event within 30 s");
            assert!(n > 0, "the stream closed");
            let line = line.trim_end_matches(['\r', '\n']);
            if line.is_empty() {
                if !name.is_empty() {
                    return Event { id, name, data };
                }
                continue;
            }
            if let Some(v) = line.strip_prefix("id: ") {
                id = v.parse().unwrap();
            } else if let Some(v) = line.strip_prefix("event: ") {
                name = v.to_string();
            } else if let Some(v) = line.strip_prefix("data: ") {
                data = v.to_string();
            }
        }
    }
}

fn title_of(data: &str) -> String {
    let v: serde_json::Value = serde_json::from_str(data).expect("a whole show's JSON");
    v["title"].as_str().unwrap().to_string()
}

fn show_copy(name: &str) -> PathBuf {
    let dir = tmp(name);
    std::fs::create_dir_all(&dir).unwrap();
    let show = dir.join("show.toml");
    std::fs::copy(repo("shows/moth-garden.toml"), &show).unwrap();
    show
}

/// A copy of the demo show `demo` with every file of `shows/` beside it
/// (its pictures, its song).
fn demo_copy(name: &str, demo: &str) -> PathBuf {
    let dir = tmp(name);
    std::fs::create_dir_all(&dir).unwrap();
    for f in std::fs::read_dir(repo("shows")).unwrap().flatten() {
        std::fs::copy(f.path(), dir.join(f.file_name())).unwrap();
    }
    dir.join(demo)
}

fn field(data: &str, key: &str) -> serde_json::Value {
    let v: serde_json::Value = serde_json::from_str(data).expect("a whole show's JSON");
    v[key].clone()
}

fn retitled(title: &str) -> String {
    std::fs::read_to_string(repo("shows/moth-garden.toml"))
        .unwrap()
        .replace(
            "title = \"The Moth Garden\"",
            &format!("title = \"{title}\""),
        )
}

#[test]
fn an_error_keeps_the_last_show_and_a_fix_reloads() {
    let show = show_copy("watch-errors");
    let server = start(&show);
    let mut ev = Events::open(&server.addr);
    let first = ev.next();
    assert_eq!((first.name.as_str(), first.id), ("show", 1));
    assert_eq!(title_of(&first.data), "The Moth Garden");

    // A save with an error: the located error, and the old show stays.
    let bad = retitled("Broken").replace("tether_m = 0.55", "tether_m = -3");
    std::fs::write(&show, &bad).unwrap();
    let e = ev.next();
    assert_eq!(e.name, "errors", "{e:?}");
    let text: serde_json::Value = serde_json::from_str(&e.data).unwrap();
    let text = text["text"].as_str().unwrap();
    assert!(
        text.contains("show.toml") && text.contains("tether_m"),
        "{text}"
    );
    let line = 1 + bad
        .lines()
        .position(|l| l.contains("tether_m = -3"))
        .expect("the broken line");
    assert!(
        text.contains(&format!(":{line}:")),
        "the error names its line ({line}): {text}"
    );
    let (status, page) = get(&server.addr, "/", &server.addr);
    assert!(status.contains("200"), "{status}");
    assert!(
        page.contains("<title>The Moth Garden</title>"),
        "the last good show is served"
    );

    // The fix: a new show is pushed, and served.
    std::fs::write(&show, retitled("Moths Again")).unwrap();
    let e = ev.next();
    assert_eq!(e.name, "show", "{e:?}");
    assert!(e.id > first.id);
    assert_eq!(title_of(&e.data), "Moths Again");
    let (_, page) = get(&server.addr, "/", &server.addr);
    assert!(page.contains("<title>Moths Again</title>"));
    assert!(
        page.contains("connect-src 'self'"),
        "a live page may reach its server"
    );
}

#[test]
fn quick_saves_never_serve_a_half_written_show() {
    let show = show_copy("watch-quick");
    let server = start(&show);
    let mut ev = Events::open(&server.addr);
    assert_eq!(ev.next().name, "show");
    // Two saves in quick succession, each written in two halves.
    for title in ["First Save", "Second Save"] {
        let text = retitled(title);
        let (a, b) = text.split_at(text.len() / 2);
        let mut f = std::fs::File::create(&show).unwrap();
        f.write_all(a.as_bytes()).unwrap();
        f.flush().unwrap();
        f.write_all(b.as_bytes()).unwrap();
    }
    // Every show sent is whole; the last is the second save.
    let deadline = Instant::now() + Duration::from_secs(20);
    loop {
        let e = ev.next();
        assert_eq!(e.name, "show", "a half-written show was compiled: {e:?}");
        let title = title_of(&e.data);
        assert!(title == "First Save" || title == "Second Save", "{title}");
        if title == "Second Save" {
            break;
        }
        assert!(Instant::now() < deadline, "the second save never arrived");
    }
    let (_, page) = get(&server.addr, "/", &server.addr);
    assert!(page.contains("<title>Second Save</title>"));
}

#[test]
fn the_server_answers_only_its_page_and_events() {
    let show = show_copy("watch-paths");
    let server = start(&show);
    let a = &server.addr;
    let (ok, page) = get(a, "/", a);
    assert!(ok.contains("200") && page.contains("id=\"show-data\""));
    for path in [
        "/show.toml",
        "/../../etc/passwd",
        "/%2e%2e/%2e%2e/etc/passwd",
        "/moon-and-tide.png",
        "/index.htm",
        "/events/x",
    ] {
        let (status, body) = get(a, path, a);
        assert!(status.contains("404"), "{path}: {status}");
        assert!(
            !body.contains("[show]") && !body.contains("root:"),
            "{path}"
        );
    }
    // A page that is not ours, on a name that resolves here, gets nothing.
    let (status, _) = get(a, "/", "elsewhere.example:80");
    assert!(status.contains("404"), "{status}");
    // A bad request line.
    let mut s = TcpStream::connect(a).unwrap();
    s.write_all(b"HELLO\r\n\r\n").unwrap();
    let mut text = String::new();
    s.read_to_string(&mut text).unwrap();
    assert!(text.starts_with("HTTP/1.1 400"), "{text}");
}

/// A port nothing listens on now (the system's pick, released).
fn free_port() -> u16 {
    let l = std::net::TcpListener::bind("127.0.0.1:0").unwrap();
    l.local_addr().unwrap().port()
}

#[test]
fn the_port_given_is_the_one_served() {
    let show = show_copy("watch-port");
    let port = free_port();
    let server = start_on(&show, port);
    assert_eq!(server.addr, format!("127.0.0.1:{port}"));
    let (status, page) = get(&server.addr, "/", &server.addr);
    assert!(status.contains("200"), "{status}");
    assert!(page.contains("id=\"show-data\""));
}

#[test]
fn a_port_in_use_is_refused_with_a_clear_message() {
    let show = show_copy("watch-port-in-use");
    // Held by this test for as long as the command runs.
    let holder = std::net::TcpListener::bind("127.0.0.1:0").unwrap();
    let port = holder.local_addr().unwrap().port();
    let mut child = Command::new(env!("CARGO_BIN_EXE_glowscore"))
        .args(["play"])
        .arg(&show)
        .args(["--watch", "--port", &port.to_string()])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let deadline = Instant::now() + Duration::from_secs(60);
    let status = loop {
        if let Some(st) = child.try_wait().unwrap() {
            break st;
        }
        if Instant::now() > deadline {
            let _ = child.kill();
            let _ = child.wait();
            panic!("the command kept running on a port in use");
        }
        std::thread::sleep(Duration::from_millis(50));
    };
    let mut err = String::new();
    child
        .stderr
        .take()
        .unwrap()
        .read_to_string(&mut err)
        .unwrap();
    assert_eq!(status.code(), Some(1), "{err}");
    assert!(
        err.starts_with(&format!("error: port {port} on 127.0.0.1 is in use"))
            && err.contains("--port"),
        "{err}"
    );
    drop(holder);
}

#[test]
fn saving_the_shows_picture_pushes_a_new_show() {
    let show = demo_copy("watch-picture", "eelgrass-lanterns.toml");
    let picture = show.with_file_name("moon-and-tide.png");
    let server = start(&show);
    let mut ev = Events::open(&server.addr);
    let first = ev.next();
    assert_eq!(first.name, "show");
    // The picture saved again with its colours inverted.
    let mut img = image::open(&picture).unwrap().to_rgba8();
    for p in img.pixels_mut() {
        p.0 = [255 - p.0[0], 255 - p.0[1], 255 - p.0[2], p.0[3]];
    }
    img.save(&picture).unwrap();
    let e = ev.next();
    assert_eq!(e.name, "show", "{e:?}");
    assert!(e.id > first.id);
    let colours = |data: &str| {
        field(data, "props")
            .as_array()
            .unwrap()
            .iter()
            .map(|p| p["colours"].as_str().unwrap().to_string())
            .collect::<Vec<_>>()
    };
    assert_ne!(
        colours(&first.data),
        colours(&e.data),
        "the new show paints the new picture"
    );
}

#[test]
fn replacing_the_song_pushes_a_new_show_with_it() {
    let show = demo_copy("watch-song", "tide-lamp-groove.toml");
    let song = show.with_file_name("tide-lamp-groove.wav");
    let server = start(&show);
    let mut ev = Events::open(&server.addr);
    let first = ev.next();
    assert_eq!(first.name, "show");
    let before = field(&first.data, "song");
    let bytes = std::fs::read(&song).unwrap();
    assert!(
        before
            .as_str()
            .is_some_and(|s| s.starts_with(&format!("{}-", bytes.len()))),
        "{before}"
    );
    // The song replaced (renamed over, as an editor saves): the same
    // header, its last samples silenced.
    let mut changed = bytes.clone();
    let n = changed.len();
    changed[n - 4000..].fill(0);
    let fresh = show.with_file_name("new-song.tmp");
    std::fs::write(&fresh, &changed).unwrap();
    std::fs::rename(&fresh, &song).unwrap();
    let e = ev.next();
    assert_eq!(e.name, "show", "{e:?}");
    let after = field(&e.data, "song");
    assert_eq!(
        after.as_str().unwrap(),
        format!("{}-{:08x}", changed.len(), crc32fast::hash(&changed)),
        "the new show names the new song"
    );
    let (_, page) = get(&server.addr, "/", &server.addr);
    assert!(
        page.contains(&glowscore::play::data::base64(&changed[..3000])),
        "the page served embeds the new song"
    );
}

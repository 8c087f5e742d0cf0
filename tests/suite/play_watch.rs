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
    let mut child = Command::new(env!("CARGO_BIN_EXE_glowscore"))
        .args(["play"])
        .arg(show)
        .args(["--watch", "--port", "0"])
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
        loop {
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

//! The watch loop's server: a minimal HTTP/1.1 server on the loopback
//! address that answers only its page (`/`) and its event stream
//! (`/events`, server-sent events as the WHATWG HTML standard, section
//! 9.2, defines them), and a [`Hub`] that holds the latest show.
//!
//! The hub holds one consistent state at a time: the page of the last good
//! show and the last event (a new show, or the errors of a show that failed).
//! A new state replaces the old one whole, under a lock, so a page or an
//! event is always the product of one complete compile.

use std::io::{BufRead, BufReader, Read, Write};
use std::net::{Ipv4Addr, SocketAddr, TcpListener, TcpStream};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Condvar, Mutex};
use std::time::Duration;

/// The most bytes of request head the server reads.
const MAX_REQUEST: usize = 8 * 1024;
/// How often an idle event stream sends a comment (and notices a closed tab).
const KEEP_ALIVE: Duration = Duration::from_secs(10);

/// What the page is told last.
#[derive(Clone, Debug, PartialEq)]
pub enum Latest {
    /// A new show: its data as JSON.
    Show(Arc<String>),
    /// The show failed: the located errors, as text.
    Errors(Arc<String>),
}

#[derive(Debug)]
struct State {
    version: u64,
    page: Arc<String>,
    latest: Latest,
    stopped: bool,
}

/// The latest show, shared by the watcher and the connections.
#[derive(Debug)]
pub struct Hub {
    state: Mutex<State>,
    changed: Condvar,
}

impl Hub {
    /// A hub serving `page` whose show's data is `data_json` (version 1).
    pub fn new(page: String, data_json: String) -> Arc<Hub> {
        Arc::new(Hub {
            state: Mutex::new(State {
                version: 1,
                page: Arc::new(page),
                latest: Latest::Show(Arc::new(data_json)),
                stopped: false,
            }),
            changed: Condvar::new(),
        })
    }

    fn lock(&self) -> std::sync::MutexGuard<'_, State> {
        self.state.lock().unwrap_or_else(|e| e.into_inner())
    }

    /// A new good show: its page and its data replace the old ones.
    pub fn publish_show(&self, page: String, data_json: String) -> u64 {
        let mut s = self.lock();
        s.version += 1;
        s.page = Arc::new(page);
        s.latest = Latest::Show(Arc::new(data_json));
        self.changed.notify_all();
        s.version
    }

    /// A show with errors: the page keeps the last good show.
    pub fn publish_errors(&self, text: String) -> u64 {
        let mut s = self.lock();
        s.version += 1;
        s.latest = Latest::Errors(Arc::new(text));
        self.changed.notify_all();
        s.version
    }

    /// The version and the latest event.
    pub fn latest(&self) -> (u64, Latest) {
        let s = self.lock();
        (s.version, s.latest.clone())
    }

    /// Ends every event stream and the accept loop.
    pub fn stop(&self) {
        self.lock().stopped = true;
        self.changed.notify_all();
    }

    fn stopped(&self) -> bool {
        self.lock().stopped
    }

    /// Waits until the version is past `seen`, the hub stops or `timeout`
    /// passes; returns the state then (`None` when stopped).
    fn wait_past(&self, seen: u64, timeout: Duration) -> Option<(u64, Latest)> {
        let s = self.lock();
        let (s, _) = self
            .changed
            .wait_timeout_while(s, timeout, |s| s.version <= seen && !s.stopped)
            .unwrap_or_else(|e| e.into_inner());
        if s.stopped {
            None
        } else {
            Some((s.version, s.latest.clone()))
        }
    }
}

/// Binds the loopback address (127.0.0.1) at `port`; 0 lets the system pick one.
pub fn bind(port: u16) -> std::io::Result<TcpListener> {
    TcpListener::bind(SocketAddr::from((Ipv4Addr::LOCALHOST, port)))
}

/// Accepts connections until the hub stops, each on its own thread.
pub fn serve(listener: TcpListener, hub: Arc<Hub>, stop: Arc<AtomicBool>) {
    let port = listener.local_addr().map(|a| a.port()).unwrap_or(0);
    for conn in listener.incoming() {
        if stop.load(Ordering::Relaxed) || hub.stopped() {
            break;
        }
        let Ok(stream) = conn else { continue };
        let hub = Arc::clone(&hub);
        std::thread::spawn(move || {
            let _ = handle(stream, &hub, port);
        });
    }
}

/// One request's method, path (without its query) and Host header.
#[derive(Debug, PartialEq)]
pub struct Request {
    /// `GET`, `HEAD`, ...
    pub method: String,
    /// The path, from `/`, without the query.
    pub path: String,
    /// The Host header, if any.
    pub host: Option<String>,
}

/// Reads a request head (at most [`MAX_REQUEST`] bytes).
pub fn read_request(stream: &mut impl Read) -> Option<Request> {
    let mut reader = BufReader::new(stream.take(MAX_REQUEST as u64));
    let mut line = String::new();
    reader.read_line(&mut line).ok()?;
    let mut parts = line.split_whitespace();
    let method = parts.next()?.to_string();
    let target = parts.next()?;
    let version = parts.next()?;
    if !version.starts_with("HTTP/1.") {
        return None;
    }
    let path = target.split(['?', '#']).next().unwrap_or("").to_string();
    let mut host = None;
    loop {
        let mut h = String::new();
        if reader.read_line(&mut h).ok()? == 0 {
            return None;
        }
        let h = h.trim_end();
        if h.is_empty() {
            break;
        }
        if let Some((k, v)) = h.split_once(':')
            && k.trim().eq_ignore_ascii_case("host")
        {
            host = Some(v.trim().to_string());
        }
    }
    Some(Request { method, path, host })
}

/// True for a Host header that names this server on the loopback address
/// (a page elsewhere that resolves its own name to 127.0.0.1 gets nothing).
fn host_is_ours(host: Option<&str>, port: u16) -> bool {
    match host {
        Some(h) => h == format!("127.0.0.1:{port}") || h == format!("localhost:{port}"),
        None => false,
    }
}

fn respond(
    stream: &mut TcpStream,
    status: &str,
    kind: &str,
    body: &[u8],
    head: bool,
) -> std::io::Result<()> {
    write!(
        stream,
        "HTTP/1.1 {status}\r\nContent-Type: {kind}\r\nContent-Length: {}\r\nCache-Control: no-store\r\nX-Content-Type-Options: nosniff\r\nConnection: close\r\n\r\n",
        body.len()
    )?;
    if !head {
        stream.write_all(body)?;
    }
    stream.flush()
}

fn handle(mut stream: TcpStream, hub: &Hub, port: u16) -> std::io::Result<()> {
    stream.set_read_timeout(Some(Duration::from_secs(5)))?;
    let Some(req) = read_request(&mut stream) else {
        return respond(
            &mut stream,
            "400 Bad Request",
            "text/plain",
            b"bad request\n",
            false,
        );
    };
    let head = req.method == "HEAD";
    let known = (req.method == "GET" || head) && host_is_ours(req.host.as_deref(), port);
    match req.path.as_str() {
        "/" | "/index.html" if known => {
            let page = Arc::clone(&hub.lock().page);
            respond(
                &mut stream,
                "200 OK",
                "text/html; charset=utf-8",
                page.as_bytes(),
                head,
            )
        }
        "/events" if known && !head => events(stream, hub),
        _ => respond(
            &mut stream,
            "404 Not Found",
            "text/plain",
            b"not found\n",
            head,
        ),
    }
}

/// One event in the stream's wire form.
pub fn event_text(version: u64, latest: &Latest) -> String {
    let (name, data) = match latest {
        Latest::Show(json) => ("show", json.to_string()),
        Latest::Errors(text) => (
            "errors",
            serde_json::json!({ "text": text.as_str() }).to_string(),
        ),
    };
    format!("id: {version}\nevent: {name}\ndata: {data}\n\n")
}

fn events(mut stream: TcpStream, hub: &Hub) -> std::io::Result<()> {
    write!(
        stream,
        "HTTP/1.1 200 OK\r\nContent-Type: text/event-stream\r\nCache-Control: no-store\r\nConnection: keep-alive\r\n\r\nretry: 500\n\n"
    )?;
    // The page has the show it was served with; tell it the latest state
    // at once (it may have changed since, or be errors).
    let (mut seen, latest) = hub.latest();
    stream.write_all(event_text(seen, &latest).as_bytes())?;
    stream.flush()?;
    loop {
        match hub.wait_past(seen, KEEP_ALIVE) {
            None => return Ok(()),
            Some((v, latest)) if v > seen => {
                seen = v;
                stream.write_all(event_text(v, &latest).as_bytes())?;
            }
            Some(_) => stream.write_all(b": still here\n\n")?,
        }
        stream.flush()?;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn requests_are_read_to_method_path_and_host() {
        let text = b"GET /events?x=1 HTTP/1.1\r\nHost: 127.0.0.1:8080\r\nAccept: */*\r\n\r\n";
        let req = read_request(&mut &text[..]).unwrap();
        assert_eq!(req.method, "GET");
        assert_eq!(req.path, "/events");
        assert_eq!(req.host.as_deref(), Some("127.0.0.1:8080"));
        assert!(read_request(&mut &b"GET /\r\n\r\n"[..]).is_none());
    }

    #[test]
    fn only_our_own_host_is_answered() {
        assert!(host_is_ours(Some("127.0.0.1:9000"), 9000));
        assert!(host_is_ours(Some("localhost:9000"), 9000));
        assert!(!host_is_ours(Some("evil.example:9000"), 9000));
        assert!(!host_is_ours(None, 9000));
    }

    #[test]
    fn events_have_one_data_line() {
        let e = event_text(3, &Latest::Errors(Arc::new("a\nb".into())));
        assert_eq!(e, "id: 3\nevent: errors\ndata: {\"text\":\"a\\nb\"}\n\n");
    }
}

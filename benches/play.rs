//! The play page: making the page of a four-minute two-poi show (criterion),
//! then two figures measured outside criterion and printed: the page's own
//! frame rate and drawing time in headless Chromium with four 144-LED
//! strips and trails on (`benches/fixtures/four-strips-144.toml`), and the
//! watch loop's latency from a save to the new show on the event stream.

use std::io::{BufRead, BufReader, Write};
use std::net::TcpStream;
use std::path::Path;
use std::process::Command;
use std::time::{Duration, Instant};

use criterion::{Criterion, criterion_group};
use glowscore::play::{self, Page};

fn fixture(name: &str) -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("benches/fixtures")
        .join(name)
}

fn page_of_four_minutes(c: &mut Criterion) {
    let prepared = glowscore::commands::prepare(&fixture("four-minutes.toml")).unwrap();
    let mut g = c.benchmark_group("play");
    g.sample_size(10);
    g.bench_function("page of a four-minute two-poi show", |b| {
        b.iter(|| {
            play::page_html(&prepared, &Page::default())
                .unwrap()
                .html
                .len()
        })
    });
    g.finish();
}

criterion_group!(benches, page_of_four_minutes);

/// The page's own frame timer after a few seconds of playing in headless Chromium.
fn browser_frame_rate() {
    let prepared = glowscore::commands::prepare(&fixture("four-strips-144.toml")).unwrap();
    let built = play::page_html(&prepared, &Page::default()).unwrap();
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("play-bench");
    std::fs::create_dir_all(&dir).unwrap();
    let page = dir.join("four-strips.html");
    play::write_page(&page, &built.html).unwrap();
    let out = Command::new("chromium")
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--window-size=1280,720",
            "--timeout=8000",
            "--dump-dom",
        ])
        .arg(format!("--user-data-dir={}", dir.join("profile").display()))
        .arg(format!("file://{}?play&trail=1", page.display()))
        .output();
    let Ok(out) = out else {
        println!("play page frame rate: chromium is not installed");
        return;
    };
    let dom = String::from_utf8_lossy(&out.stdout);
    let attr = |name: &str| -> String {
        let key = format!("{name}=\"");
        dom.find(&key)
            .map(|i| {
                let rest = &dom[i + key.len()..];
                rest[..rest.find('"').unwrap_or(0)].to_string()
            })
            .unwrap_or_else(|| "?".into())
    };
    println!(
        "play page, four 144-LED strips, trail 1 beat, 1280x720: {} frames/s, {} ms of drawing per frame (page {} bytes)",
        attr("data-fps"),
        attr("data-draw-ms"),
        built.html.len()
    );
}

/// From a save of the show to its new version on the event stream, for each demo show.
fn watch_latency() {
    for demo in [
        "moth-garden.toml",
        "salt-marsh-reel.toml",
        "eelgrass-lanterns.toml",
    ] {
        let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("shows");
        let dir = Path::new(env!("CARGO_TARGET_TMPDIR"))
            .join("play-bench")
            .join(demo);
        std::fs::create_dir_all(&dir).unwrap();
        for f in std::fs::read_dir(&src).unwrap().flatten() {
            std::fs::copy(f.path(), dir.join(f.file_name())).unwrap();
        }
        let show = dir.join(demo);
        let listener = play::watch::bind(0).unwrap();
        let port = listener.local_addr().unwrap().port();
        drop(listener);
        let show2 = show.clone();
        std::thread::spawn(move || {
            let _ = glowscore::commands::play::watch_loop(&show2, port, None, &mut std::io::sink());
        });
        let addr = format!("127.0.0.1:{port}");
        let stream = loop {
            if let Ok(s) = TcpStream::connect(&addr) {
                break s;
            }
            std::thread::sleep(Duration::from_millis(20));
        };
        let mut s = stream;
        write!(s, "GET /events HTTP/1.1\r\nHost: {addr}\r\n\r\n").unwrap();
        let mut r = BufReader::new(s);
        let mut next_event = || loop {
            let mut line = String::new();
            if r.read_line(&mut line).unwrap() == 0 {
                panic!("stream closed");
            }
            if line.starts_with("event: ") {
                return;
            }
        };
        next_event();
        let mut times = Vec::new();
        let text = std::fs::read_to_string(&show).unwrap();
        for i in 0..5 {
            std::thread::sleep(Duration::from_millis(300));
            let t0 = Instant::now();
            std::fs::write(&show, format!("{text}\n# save {i}\n")).unwrap();
            next_event();
            times.push(t0.elapsed().as_secs_f64() * 1000.0);
        }
        times.sort_by(f64::total_cmp);
        println!(
            "watch latency, {demo}: median {:.0} ms, worst {:.0} ms (save to event, 5 saves)",
            times[2], times[4]
        );
    }
}

fn main() {
    benches();
    Criterion::default().configure_from_args().final_summary();
    browser_frame_rate();
    watch_latency();
}

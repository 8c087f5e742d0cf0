//! The play page: making the page of a four-minute two-poi show (criterion),
//! then, measured outside criterion and printed, the watch loop's latency
//! from a save to the new show on the event stream for each demo show.
//!
//! The page's own frame rate is measured by `benches/play_page.rs`.

use std::io::{BufRead, BufReader, Write};
use std::net::TcpStream;
use std::path::Path;
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
    watch_latency();
}

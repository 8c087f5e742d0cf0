//! The play page's own frame rate in headless Chromium (software
//! rendering, no GPU), printed, not timed by a harness: the page is written
//! for a show, opened playing in a 1280 x 720 window, and its own frame
//! timer (the frames per second over its last 120 frames, `data-fps` on its
//! body, and the script's milliseconds per frame, `data-draw-ms`) is read
//! once a second through the DevTools protocol over Chromium's
//! `--remote-debugging-pipe` (JSON messages ended by a NUL byte, the
//! browser reading file descriptor 3 and writing 4).
//!
//!     cargo bench --bench play_page             # every case below
//!     cargo bench --bench play_page -- 1bar     # the cases whose name has "1bar"
//!
//! The cases: `benches/fixtures/four-strips-144.toml` (four props of 144
//! LEDs) with trails off, half a beat, one beat and one bar, and the
//! four-minute two-poi show with a one-bar trail. Chromium must be
//! installed (`apt-get install -y chromium`).

use std::io::{Read, Write};
use std::path::{Path, PathBuf};
use std::process::{Child, ChildStdin, ChildStdout, Command, Stdio};
use std::time::{Duration, Instant};

use serde_json::{Value, json};

/// Seconds of playing before the first reading (the page's timer covers
/// its last 120 frames, two seconds at 60 frames/s).
const WARM_UP: Duration = Duration::from_secs(3);
/// Readings, one a second.
const READINGS: usize = 8;

#[path = "../tests/suite/browser.rs"]
mod browser;
use browser::chromium;

/// A browser driven over its DevTools pipe.
struct Browser {
    child: Child,
    to: ChildStdin,
    from: ChildStdout,
    pending: Vec<u8>,
    next_id: u64,
    profile: PathBuf,
}

impl Browser {
    fn start(size: (u32, u32), profile: PathBuf) -> Browser {
        let _ = std::fs::remove_dir_all(&profile);
        // The shell gives the browser our pipes as its descriptors 3 and 4.
        let mut child = Command::new("sh")
            .arg("-c")
            .arg("exec \"$0\" \"$@\" 3<&0 4>&1 </dev/null >/dev/null 2>/dev/null")
            .arg(chromium())
            .args([
                "--headless",
                "--no-sandbox",
                "--disable-gpu",
                "--no-first-run",
                "--disable-background-networking",
                "--disable-component-update",
                "--disable-sync",
                "--hide-scrollbars",
                "--force-device-scale-factor=1",
                "--remote-debugging-pipe",
            ])
            .arg(format!("--window-size={},{}", size.0, size.1))
            .arg(format!("--user-data-dir={}", profile.display()))
            .arg("about:blank")
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .spawn()
            .expect("start chromium");
        let to = child.stdin.take().unwrap();
        let from = child.stdout.take().unwrap();
        Browser {
            child,
            to,
            from,
            pending: Vec::new(),
            next_id: 0,
            profile,
        }
    }

    /// Sends one command and waits for its answer (events are skipped).
    fn call(&mut self, method: &str, params: Value, session: Option<&str>) -> Value {
        self.next_id += 1;
        let id = self.next_id;
        let mut msg = json!({ "id": id, "method": method, "params": params });
        if let Some(s) = session {
            msg["sessionId"] = json!(s);
        }
        let mut bytes = serde_json::to_vec(&msg).unwrap();
        bytes.push(0);
        self.to.write_all(&bytes).expect("write to chromium");
        self.to.flush().unwrap();
        loop {
            if let Some(end) = self.pending.iter().position(|&b| b == 0) {
                let text: Vec<u8> = self.pending.drain(..=end).collect();
                let v: Value = serde_json::from_slice(&text[..end]).expect("a DevTools message");
                if v["id"].as_u64() == Some(id) {
                    assert!(v.get("error").is_none(), "{method}: {v}");
                    return v["result"].clone();
                }
                continue;
            }
            let mut buf = [0u8; 65536];
            let n = self.from.read(&mut buf).expect("read from chromium");
            assert!(n > 0, "chromium closed its pipe");
            self.pending.extend_from_slice(&buf[..n]);
        }
    }

    /// Opens `url` in a new tab; returns the tab and its session.
    fn open(&mut self, url: &str) -> (String, String) {
        let target = self.call("Target.createTarget", json!({ "url": url }), None);
        let id = target["targetId"].as_str().unwrap().to_string();
        let attached = self.call(
            "Target.attachToTarget",
            json!({ "targetId": id, "flatten": true }),
            None,
        );
        (id, attached["sessionId"].as_str().unwrap().to_string())
    }

    /// The value of a script expression in the tab.
    fn eval(&mut self, session: &str, expr: &str) -> Value {
        let r = self.call(
            "Runtime.evaluate",
            json!({ "expression": expr, "returnByValue": true }),
            Some(session),
        );
        r["result"]["value"].clone()
    }
}

impl Drop for Browser {
    fn drop(&mut self) {
        let _ = self.call("Browser.close", json!({}), None);
        let deadline = Instant::now() + Duration::from_secs(5);
        while Instant::now() < deadline {
            if let Ok(Some(_)) = self.child.try_wait() {
                break;
            }
            std::thread::sleep(Duration::from_millis(50));
        }
        // Our own child, by its id.
        let _ = self.child.kill();
        let _ = self.child.wait();
        let _ = std::fs::remove_dir_all(&self.profile);
    }
}

fn page_of(show: &Path, dir: &Path) -> PathBuf {
    std::fs::create_dir_all(dir).unwrap();
    let page = dir.join(format!(
        "{}.html",
        show.file_stem().unwrap().to_string_lossy()
    ));
    glowscore::commands::play::run(show, &page, None, &mut std::io::sink()).expect("the page");
    page
}

fn median(v: &mut [f64]) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

fn main() {
    let filter: Vec<String> = std::env::args()
        .skip(1)
        .filter(|a| !a.starts_with("--"))
        .collect();
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let dir = root.join("target/tmp/play-page-bench");
    let strips = page_of(&root.join("benches/fixtures/four-strips-144.toml"), &dir);
    let poi = page_of(&root.join("benches/fixtures/four-minutes.toml"), &dir);
    let cases: [(&str, &Path, &str); 5] = [
        ("four 144-LED strips, trail off", &strips, "0"),
        ("four 144-LED strips, trail 0.5 beat", &strips, "0.5"),
        ("four 144-LED strips, trail 1 beat", &strips, "1"),
        ("four 144-LED strips, trail 1bar", &strips, "4"),
        ("two poi, four minutes, trail 1bar", &poi, "4"),
    ];
    let mut browser = Browser::start((1280, 720), dir.join("profile"));
    for (name, page, trail) in cases {
        if !filter.is_empty() && !filter.iter().any(|f| name.contains(f.as_str())) {
            continue;
        }
        let url = format!("file://{}?play&trail={trail}", page.display());
        let (tab, session) = browser.open(&url);
        let start = Instant::now();
        while browser.eval(&session, "document.body.dataset.ready") != json!("true") {
            assert!(
                start.elapsed() < Duration::from_secs(30),
                "{name}: the page never got ready"
            );
            std::thread::sleep(Duration::from_millis(50));
        }
        std::thread::sleep(WARM_UP);
        let (mut fps, mut ms) = (Vec::new(), Vec::new());
        for _ in 0..READINGS {
            let v = browser.eval(
                &session,
                "[document.body.dataset.fps, document.body.dataset.drawMs, document.body.dataset.error || '']",
            );
            let err = v[2].as_str().unwrap_or("");
            assert!(err.is_empty(), "{name}: page error {err}");
            fps.push(v[0].as_str().unwrap().parse::<f64>().unwrap());
            ms.push(v[1].as_str().unwrap().parse::<f64>().unwrap());
            std::thread::sleep(Duration::from_secs(1));
        }
        let lowest = fps.iter().copied().fold(f64::INFINITY, f64::min);
        println!(
            "play page, {name}: {:.1} frames/s (median of {READINGS} readings, lowest {lowest:.1}), script {:.2} ms a frame",
            median(&mut fps),
            median(&mut ms)
        );
        browser.call("Target.closeTarget", json!({ "targetId": tab }), None);
    }
}

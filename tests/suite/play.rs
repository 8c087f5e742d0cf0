//! The play page, in a real browser: headless Chromium draws the page at
//! chosen moments (`?t=..&bare&viewport=..`) and the screenshots are read
//! back. Each head must be where the library's own motion puts it (within
//! 2 px) in the colour the CSV table gives for that frame, shown through the
//! sRGB encoding of IEC 61966-2-1; the page must raise no script error,
//! show frame floor(t * frame_rate) and load nothing from the network.
//!
//! Chromium is required: `.ci/run` installs it (`apt-get install -y
//! chromium`); without it these tests fail, they never skip.

use std::path::{Path, PathBuf};
use std::process::Command;

use crate::browser::chromium;
use glowscore::play::data::{colour_runs, decode_runs};
use glowscore::prepared::Prepared;
use glowscore::preview::{Camera, View};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_glowscore"))
}

pub fn tmp(name: &str) -> PathBuf {
    let d = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join("play")
        .join(std::process::id().to_string());
    std::fs::create_dir_all(&d).unwrap();
    d.join(name)
}

pub fn repo(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// Runs headless Chromium on `url` with `extra` arguments; returns stdout.
pub fn run_chromium(url: &str, size: (u32, u32), extra: &[String]) -> String {
    let profile = tmp(&format!(
        "profile-{}",
        std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .unwrap()
            .as_nanos()
    ));
    let out = Command::new(chromium())
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--hide-scrollbars",
            "--force-device-scale-factor=1",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .arg(format!("--window-size={},{}", size.0, size.1))
        .args(extra)
        .arg(url)
        .output()
        .expect("run chromium");
    let _ = std::fs::remove_dir_all(&profile);
    assert!(
        out.status.success(),
        "chromium failed on {url}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// A screenshot of `page` at `query`.
pub fn screenshot(page: &Path, query: &str, size: (u32, u32), name: &str) -> image::RgbImage {
    let png = tmp(name);
    let _ = std::fs::remove_file(&png);
    let url = format!("file://{}?{query}", page.display());
    run_chromium(&url, size, &[format!("--screenshot={}", png.display())]);
    image::open(&png)
        .unwrap_or_else(|e| panic!("read the screenshot {}: {e}", png.display()))
        .to_rgb8()
}

/// The page's DOM after load at `query`.
pub fn dom(page: &Path, query: &str) -> String {
    dom_at(page, query, (800, 600))
}

/// The page's DOM after load at `query` in a window of `size`.
pub fn dom_at(page: &Path, query: &str, size: (u32, u32)) -> String {
    let url = format!("file://{}?{query}", page.display());
    run_chromium(&url, size, &["--dump-dom".into()])
}

/// The value of attribute `name` on the `<body>` of a dumped DOM.
pub fn body_attr(dom: &str, name: &str) -> Option<String> {
    let body = &dom[dom.find("<body")?..];
    let tag = &body[..body.find('>')?];
    let key = format!("{name}=\"");
    let at = tag.find(&key)? + key.len();
    Some(tag[at..at + tag[at..].find('"')?].to_string())
}

fn write_page(show: &Path, name: &str) -> PathBuf {
    let page = tmp(name);
    let st = bin()
        .args(["play"])
        .arg(show)
        .arg("--out")
        .arg(&page)
        .output()
        .unwrap();
    assert!(
        st.status.success(),
        "{}",
        String::from_utf8_lossy(&st.stderr)
    );
    page
}

/// The CSV table's rows of every prop, from `compile` (the contract's
/// `DIR/P.csv`: `frame,time_s,r0,g0,b0,...`).
fn csv_tables(show: &Path, props: &[String], dir: &str) -> Vec<Vec<Vec<u8>>> {
    let out = tmp(dir);
    let st = bin()
        .arg("compile")
        .arg(show)
        .arg("--out")
        .arg(&out)
        .arg("--no-previews")
        .output()
        .unwrap();
    assert!(
        st.status.success(),
        "{}",
        String::from_utf8_lossy(&st.stderr)
    );
    props
        .iter()
        .map(|p| {
            let text = std::fs::read_to_string(out.join(format!("{p}.csv"))).unwrap();
            text.lines()
                .skip(1)
                .map(|l| {
                    l.split(',')
                        .skip(2)
                        .map(|v| v.trim().parse::<u8>().unwrap())
                        .collect()
                })
                .collect()
        })
        .collect()
}

/// sRGB encoding of a linear channel, IEC 61966-2-1 (the display colour of
/// an LED byte), written out here from the standard.
fn iec_encode_byte(b: u8) -> u8 {
    let l = f64::from(b) / 255.0;
    let v = if l <= 0.003_130_8 {
        12.92 * l
    } else {
        1.055 * libm::pow(l, 1.0 / 2.4) - 0.055
    };
    (v * 255.0).round() as u8
}

fn close(a: [u8; 3], b: [u8; 3], tol: i32) -> bool {
    (0..3).all(|i| (i32::from(a[i]) - i32::from(b[i])).abs() <= tol)
}

/// Checks every head of `show` (props with one LED) at each moment.
fn heads_are_drawn_where_the_motion_puts_them(show_rel: &str, moments: &[f64], tag: &str) {
    heads_over_trail(show_rel, moments, tag, "");
}

/// As above, with `extra` added to each page's query (`&trail=4`: a trail
/// of a bar, over which every dot must still be drawn).
fn heads_over_trail(show_rel: &str, moments: &[f64], tag: &str, extra: &str) {
    let show = repo(show_rel);
    let prepared = glowscore::commands::prepare(&show).unwrap();
    let s = prepared.show();
    let names: Vec<String> = s.props.iter().map(|p| p.name.clone()).collect();
    let tables = csv_tables(&show, &names, &format!("{tag}-tables"));
    let page = write_page(&show, &format!("{tag}.html"));
    let size = (640u32, 420u32);
    let vp = [-1.6, 0.1, 1.6, 2.4];
    let cam = Camera::ortho(View::Front, vp, size.0, size.1);
    let rate = f64::from(s.frame_rate_hz);
    let mut checked = 0;
    for (mi, &t) in moments.iter().enumerate() {
        let query = format!(
            "t={t}&bare&viewport={},{},{},{}{extra}",
            vp[0], vp[1], vp[2], vp[3]
        );
        let img = screenshot(&page, &query, size, &format!("{tag}-{mi}.png"));
        assert_eq!(img.dimensions(), size, "the screenshot is the window");
        let x = t * rate;
        let k = if (x - x.round()).abs() < 1e-9 {
            x.round()
        } else {
            x.floor()
        } as usize;
        let heads: Vec<[f64; 2]> = prepared
            .motions()
            .iter()
            .map(|m| {
                let p = cam.project(&m.state_at(&s.tempo, t).head_m).unwrap();
                [p.px, p.py]
            })
            .collect();
        for (pi, prop) in s.props.iter().enumerate() {
            assert_eq!(prop.leds, 1, "the test reads poi heads of one LED");
            let row = &tables[pi][k];
            let want = [
                iec_encode_byte(row[0]),
                iec_encode_byte(row[1]),
                iec_encode_byte(row[2]),
            ];
            let [px, py] = heads[pi];
            // Another head within reach of this one's dot would mix in.
            let crowded = heads
                .iter()
                .enumerate()
                .any(|(o, h)| o != pi && (h[0] - px).hypot(h[1] - py) < 14.0);
            let inside = px >= 8.0
                && py >= 8.0
                && px < f64::from(size.0) - 8.0
                && py < f64::from(size.1) - 8.0;
            if crowded || !inside {
                continue;
            }
            // The dot: pixels of the wanted colour near the predicted point.
            let (mut n, mut sx, mut sy) = (0usize, 0.0, 0.0);
            for y in (py as i64 - 8)..=(py as i64 + 8) {
                for x in (px as i64 - 8)..=(px as i64 + 8) {
                    let c = img.get_pixel(x as u32, y as u32).0;
                    if close(c, want, 4) {
                        n += 1;
                        sx += x as f64 + 0.5;
                        sy += y as f64 + 0.5;
                    }
                }
            }
            let centre = img.get_pixel(px as u32, py as u32).0;
            assert!(
                close(centre, want, 4),
                "{tag} t={t}: prop {} at ({px:.1}, {py:.1}) shows {centre:?}, the table's frame {k} gives {row:?} (display {want:?})",
                prop.name
            );
            // A dot at least 4 px across covers at least 12 pixels.
            assert!(
                n >= 12,
                "{tag} t={t}: prop {}'s dot has {n} pixels",
                prop.name
            );
            let (cx, cy) = (sx / n as f64, sy / n as f64);
            let off = (cx - px).hypot(cy - py);
            assert!(
                off <= 2.0,
                "{tag} t={t}: prop {}'s dot is centred at ({cx:.2}, {cy:.2}), {off:.2} px from the motion's ({px:.2}, {py:.2})",
                prop.name
            );
            checked += 1;
        }
    }
    assert!(
        checked >= moments.len(),
        "{tag}: only {checked} heads could be checked"
    );
}

#[test]
fn moth_garden_heads_are_where_the_motion_puts_them_in_the_tables_colours() {
    // Moments across both tempi, in colour changes and in fades.
    heads_are_drawn_where_the_motion_puts_them(
        "shows/moth-garden.toml",
        &[3.1, 11.37, 20.5, 24.004, 28.333],
        "moth",
    );
}

#[test]
fn salt_marsh_heads_are_where_the_motion_puts_them_in_the_tables_colours() {
    heads_are_drawn_where_the_motion_puts_them(
        "shows/salt-marsh-reel.toml",
        &[1.7, 6.25, 13.9],
        "salt",
    );
}

#[test]
fn heads_are_drawn_over_a_trail_of_a_whole_bar() {
    heads_over_trail(
        "shows/salt-marsh-reel.toml",
        &[1.7, 6.25, 13.9],
        "salt-bar",
        "&trail=4",
    );
}

#[test]
fn the_page_shows_frame_floor_t_times_rate_and_raises_no_error() {
    let show = repo("shows/moth-garden.toml");
    let page = write_page(&show, "frames.html");
    // Just before and at a frame boundary (500 frames/s): 1001 / 500 s starts frame 1001.
    for (t, frame) in [
        ("2.001999", 1000),
        ("2.002", 1001),
        ("0", 0),
        ("7.25", 3625),
    ] {
        let d = dom(&page, &format!("t={t}"));
        assert_eq!(
            body_attr(&d, "data-error"),
            None,
            "script error at t={t}: {d}"
        );
        assert_eq!(
            body_attr(&d, "data-ready").as_deref(),
            Some("true"),
            "t={t}"
        );
        assert_eq!(
            body_attr(&d, "data-frame").as_deref(),
            Some(frame.to_string().as_str()),
            "t={t}"
        );
        assert!(!d.contains("<title>page error"), "t={t}");
    }
    // A broken viewport is reported, not thrown.
    let d = dom(&page, "t=1&viewport=1,2,0,3");
    assert!(body_attr(&d, "data-error").is_some_and(|e| e.contains("viewport")));
}

#[test]
fn a_strip_show_with_a_painting_plays_without_error() {
    let show = repo("shows/eelgrass-lanterns.toml");
    let page = write_page(&show, "eelgrass.html");
    let d = dom(&page, "t=12.5");
    assert_eq!(body_attr(&d, "data-error"), None, "{d}");
    assert_eq!(body_attr(&d, "data-ready").as_deref(), Some("true"));
    // With the controls: the readout names a bar and the section.
    assert!(d.contains("id=\"barbeat\">"), "{d}");
}

#[test]
fn the_page_loads_nothing_from_the_network_and_is_small() {
    // A four-minute two-poi show at 1000 frames/s (benches/fixtures).
    let show = repo("benches/fixtures/four-minutes.toml");
    let page = write_page(&show, "four-minutes.html");
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(html.len() < 2 * 1024 * 1024, "{} bytes", html.len());
    for scheme in ["http:", "https:", "ws:", "wss:", "//cdn", "src=\"//"] {
        assert!(!html.contains(scheme), "the page names {scheme}");
    }
    assert!(
        html.contains(
            "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; "
        )
    );
    assert!(
        !html.contains("connect-src"),
        "a file page connects nowhere"
    );
}

#[test]
fn the_pages_colours_are_the_prepared_frames() {
    // The run-length data decodes to exactly the frames every table gets.
    for rel in ["shows/moth-garden.toml", "shows/eelgrass-lanterns.toml"] {
        let prepared: Prepared = glowscore::commands::prepare(&repo(rel)).unwrap();
        let runs = colour_runs(&prepared).unwrap();
        for (p, data) in runs.iter().enumerate() {
            let leds = prepared.show().props[p].leds as usize;
            let frames = decode_runs(data, leds).unwrap();
            assert_eq!(
                frames.len() as u64,
                prepared.frame_count(),
                "{rel} prop {p}"
            );
            let mut buf = vec![[0u8; 3]; leds];
            for k in (0..prepared.frame_count()).step_by(7) {
                prepared.fill_frame(p, k, &mut buf);
                assert_eq!(frames[k as usize], buf, "{rel} prop {p} frame {k}");
            }
        }
    }
}

#[test]
fn a_page_with_a_song_embeds_it_and_opens_without_error() {
    let show = repo("shows/moth-garden.toml");
    let page = tmp("song.html");
    let st = bin()
        .args(["play"])
        .arg(&show)
        .arg("--song")
        .arg(repo("shows/tide-lamp-groove.wav"))
        .arg("--out")
        .arg(&page)
        .output()
        .unwrap();
    assert!(
        st.status.success(),
        "{}",
        String::from_utf8_lossy(&st.stderr)
    );
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(
        html.contains("id=\"song\" data-mime=\"audio/wav\">UklGR"),
        "a base64 RIFF file"
    );
    let d = dom(&page, "t=3");
    assert_eq!(body_attr(&d, "data-error"), None, "{d}");
    assert_eq!(body_attr(&d, "data-frame").as_deref(), Some("1500"));
}

/// A show with `music` embeds its own song without `--song`.
#[test]
fn a_show_with_music_embeds_its_song() {
    let show = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("shows/tide-lamp-groove.toml");
    let prepared = glowscore::commands::prepare(&show).expect("the demo prepares");
    let song = glowscore::commands::play::song_of(prepared.show(), None).expect("a song");
    assert!(song.ends_with("tide-lamp-groove.wav"), "{}", song.display());
    assert!(song.exists());
}

/// A box `[left, top, right, bottom]` from the page's layout probe.
fn boxes(v: &serde_json::Value) -> [f64; 4] {
    let a = v.as_array().expect("a box");
    [0, 1, 2, 3].map(|i| a[i].as_f64().unwrap())
}

#[test]
fn the_controls_wrap_without_overlapping_the_stage_from_800_px_wide() {
    let page = write_page(
        &repo("benches/fixtures/four-strips-144.toml"),
        "layout.html",
    );
    for (w, h) in [(800u32, 600u32), (1280, 720)] {
        let d = dom_at(&page, "t=5.3", (w, h));
        assert_eq!(body_attr(&d, "data-error"), None, "{w} px: {d}");
        let json = body_attr(&d, "data-layout")
            .unwrap_or_else(|| panic!("{w} px: no layout probe"))
            .replace("&quot;", "\"");
        let v: serde_json::Value = serde_json::from_str(&json).unwrap();
        // The window the page had (a dumping browser's is shorter than asked).
        let win = v["window"].as_array().unwrap();
        let (ww, wh) = (win[0].as_f64().unwrap(), win[1].as_f64().unwrap());
        assert_eq!(ww, f64::from(w), "{json}");
        let scroll = v["scroll"].as_array().unwrap();
        assert!(
            scroll[0].as_f64().unwrap() <= ww && scroll[1].as_f64().unwrap() <= wh,
            "{w} px: the page scrolls: {json}"
        );
        let top = boxes(&v["top"]);
        let stage = boxes(&v["stage"]);
        let controls = boxes(&v["controls"]);
        assert!(
            top[3] <= stage[1] + 0.5,
            "{w} px: the readout overlaps the stage: {json}"
        );
        assert!(
            stage[3] <= controls[1] + 0.5,
            "{w} px: the controls overlap the stage: {json}"
        );
        assert!(
            controls[3] <= wh + 0.5,
            "{w} px: the controls leave the window: {json}"
        );
        assert!(
            stage[3] - stage[1] >= 0.5 * wh,
            "{w} px: the stage is short: {json}"
        );
        let items: Vec<[f64; 4]> = v["items"].as_array().unwrap().iter().map(boxes).collect();
        for (i, a) in items.iter().enumerate() {
            // Hidden controls (the click with a song) have an empty box.
            if a[2] - a[0] <= 0.0 {
                continue;
            }
            assert!(
                a[0] >= controls[0] - 0.5
                    && a[2] <= controls[2].min(ww) + 0.5
                    && a[1] >= controls[1] - 0.5
                    && a[3] <= controls[3] + 0.5,
                "{w} px: control {i} {a:?} is outside the controls {controls:?}"
            );
            for (j, b) in items.iter().enumerate().skip(i + 1) {
                let overlap = a[0] < b[2] - 0.5
                    && b[0] < a[2] - 0.5
                    && a[1] < b[3] - 0.5
                    && b[1] < a[3] - 0.5;
                assert!(!overlap, "{w} px: controls {i} {a:?} and {j} {b:?} overlap");
            }
        }
        // The screenshot at this width: the stage is drawn where the probe
        // says (lit pixels inside it), the controls' row below it.
        let img = screenshot(&page, "t=5.3", (w, h), &format!("layout-{w}.png"));
        assert_eq!(img.dimensions(), (w, h));
        let lit = (stage[1] as u32..stage[3] as u32)
            .flat_map(|y| (0..w).map(move |x| (x, y)))
            .filter(|&(x, y)| img.get_pixel(x, y).0.iter().any(|&c| c > 120))
            .count();
        assert!(lit > 1000, "{w} px: the stage shows {lit} lit pixels");
    }
}

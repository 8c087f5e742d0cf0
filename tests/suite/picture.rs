//! Reading pictures to paint: PNG (8 and 16 bits, grey or colour, with or
//! without alpha) and JPEG, decoded to linear light with the IEC 61966-2-1
//! transfer function; broken and oversized files refused with a message.

use std::path::{Path, PathBuf};

use glowscore::colour::srgb_to_linear;
use glowscore::picture::Picture;

fn tmp(name: &str) -> PathBuf {
    let d = Path::new(env!("CARGO_TARGET_TMPDIR")).join("picture");
    std::fs::create_dir_all(&d).unwrap();
    d.join(name)
}

fn close(a: f32, b: f64, tol: f64, what: &str) {
    assert!((f64::from(a) - b).abs() <= tol, "{what}: {a} vs {b}");
}

#[test]
fn png_texels_decode_to_premultiplied_linear_light() {
    // 8-bit RGBA: (128, 64, 255) at alpha 51 (0.2).
    let path = tmp("rgba8.png");
    image::RgbaImage::from_pixel(3, 2, image::Rgba([128, 64, 255, 51]))
        .save(&path)
        .unwrap();
    let p = Picture::load(&path).unwrap();
    assert_eq!((p.width(), p.height()), (3, 2));
    let t = p.texel(2, 1);
    // IEC 61966-2-1: 128/255 -> 0.2158605, 64/255 -> 0.0512695 (linear).
    close(t[0], 0.215_860_5 * 0.2, 1e-6, "red");
    close(t[1], 0.051_269_5 * 0.2, 1e-6, "green");
    close(t[2], 0.2, 1e-6, "blue");
    close(t[3], 0.2, 1e-6, "alpha");

    // 16-bit grey without alpha: every channel the grey, opaque.
    let path = tmp("grey16.png");
    image::ImageBuffer::<image::Luma<u16>, Vec<u16>>::from_pixel(1, 1, image::Luma([40_000]))
        .save(&path)
        .unwrap();
    let t = Picture::load(&path).unwrap().texel(0, 0);
    let want = srgb_to_linear(40_000.0 / 65_535.0);
    for v in &t[..3] {
        close(*v, want, 1e-6, "grey");
    }
    close(t[3], 1.0, 0.0, "opaque");
}

#[test]
fn jpeg_pictures_are_read_too() {
    // JPEG is lossy: a flat orange square comes back within a few steps.
    let path = tmp("flat.jpg");
    image::RgbImage::from_pixel(16, 16, image::Rgb([255, 128, 0]))
        .save(&path)
        .unwrap();
    let p = Picture::load(&path).unwrap();
    let t = p.texel(8, 8);
    close(t[0], 1.0, 0.03, "red");
    close(t[1], srgb_to_linear(128.0 / 255.0), 0.03, "green");
    close(t[2], 0.0, 0.03, "blue");
    close(t[3], 1.0, 0.0, "alpha");
}

#[test]
fn broken_and_oversized_pictures_are_refused() {
    let path = tmp("not-a-picture.png");
    std::fs::write(&path, b"this is text").unwrap();
    let e = Picture::load(&path).unwrap_err();
    assert!(e.contains("cannot decode"), "{e}");

    let e = Picture::load(&tmp("missing.png")).unwrap_err();
    assert!(e.contains("cannot read"), "{e}");

    // A PNG header claiming 60000 x 60000 texels (and no data): refused from
    // the header, before anything that size is allocated.
    let mut png = b"\x89PNG\r\n\x1a\n".to_vec();
    let mut ihdr = b"IHDR".to_vec();
    ihdr.extend(60_000u32.to_be_bytes());
    ihdr.extend(60_000u32.to_be_bytes());
    ihdr.extend([8, 6, 0, 0, 0]);
    png.extend(13u32.to_be_bytes());
    png.extend(&ihdr);
    png.extend(crc32fast::hash(&ihdr).to_be_bytes());
    let path = tmp("huge.png");
    std::fs::write(&path, &png).unwrap();
    let e = Picture::load(&path).unwrap_err();
    assert!(e.contains("exceeds limit"), "{e}");

    // Within the side limit but over the texel limit: refused with the sizes.
    let path = tmp("big.png");
    image::GrayImage::new(4096, 1100).save(&path).unwrap();
    let e = Picture::load(&path).unwrap_err();
    assert!(e.contains("4096x1100"), "{e}");
}

#[test]
fn a_path_that_is_not_a_file_is_refused_without_waiting_on_it() {
    // A named pipe (POSIX mkfifo) would block the reader until something
    // writes to it; a folder has nothing to decode. Both are refused at once.
    let fifo = tmp("pipe.png");
    let _ = std::fs::remove_file(&fifo);
    let made = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .is_ok_and(|s| s.success());
    let folder = tmp("folder.png");
    std::fs::create_dir_all(&folder).unwrap();
    let mut paths = Vec::new();
    if made {
        paths.push(fifo);
    }
    paths.push(folder);
    for path in paths {
        let (tx, rx) = std::sync::mpsc::channel();
        let p = path.clone();
        std::thread::spawn(move || {
            let _ = tx.send(Picture::load(&p).map(|_| ()));
        });
        let got = rx
            .recv_timeout(std::time::Duration::from_secs(10))
            .unwrap_or_else(|_| panic!("{} still being read after 10 s", path.display()));
        let e = got.unwrap_err();
        assert!(e.contains("not a file"), "{}: {e}", path.display());
    }
}

#[test]
fn cues_that_name_one_picture_share_it() {
    // Read once: every cue painting `dots.png` holds the same decoded
    // picture (a show may name one picture in many cues; each copy of a
    // 4-million-texel picture would take 64 MB).
    let pic = tmp("dots.png");
    image::RgbaImage::from_pixel(4, 2, image::Rgba([255, 200, 0, 255]))
        .save(&pic)
        .unwrap();
    let mut text = String::from(
        "[show]\nframe_rate = 100\nbpm = 60\nbeats_per_bar = 4\n\
         [prop.p]\ntether_m = 0.5\nanchor_m = [0.0, 1.5, 0.0]\n\
         [pattern.x]\nplane = \"wall\"\nbeats = 4\nhand_radius_m = 0.0\nhead_turns = 1\n\
         [[section]]\nbars = [1, 3]\np = \"x\"\n",
    );
    for bar in 1..=3 {
        text += &format!(
            "[[cue]]\nprop = \"p\"\nbars = [{bar}, {bar}]\nimage = \"dots.png\"\nimage_width_m = 1.0\n"
        );
    }
    let show_path = tmp("dots.toml");
    std::fs::write(&show_path, text).unwrap();
    let show = glowscore::show::load(&show_path).unwrap();
    let pictures: Vec<_> = show
        .cues
        .iter()
        .map(|c| c.painting().unwrap().picture.clone())
        .collect();
    assert_eq!(pictures.len(), 3);
    assert_eq!((pictures[0].width(), pictures[0].height()), (4, 2));
    for p in &pictures[1..] {
        assert!(std::sync::Arc::ptr_eq(&pictures[0], p));
    }
}

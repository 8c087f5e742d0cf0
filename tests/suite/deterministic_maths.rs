//! Colour conversions never reach the platform's maths library.
//!
//! Frame tables must be the same bytes on every machine
//! (`docs/conventions.md`, "Determinism"). The project's own code calls
//! transcendental functions only through `glowscore::num` (libm; `clippy.toml`
//! bans the platform ones), but the Oklab conversion is palette's, and
//! palette calls the platform's `cbrt` and `powf` whenever its `std` feature
//! is on. So the proof is made on the build itself: palette (and its maths
//! crate) must be compiled with `libm` and without `std`. Cargo unifies
//! features across the whole dependency graph, so any crate that asked for
//! palette's `std` would turn it on for everyone; this test asks Cargo for the
//! features actually resolved and fails if `std` is among them.

use std::collections::BTreeMap;
use std::process::Command;

use glowscore::colour::to_oklab;
use palette::LinSrgb;

/// Every package of the host build (normal, build and dev dependencies) with
/// the features Cargo resolved for it, from `cargo tree`.
fn resolved_features() -> BTreeMap<String, Vec<String>> {
    let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".to_owned());
    let out = Command::new(cargo)
        .args([
            "tree",
            "--offline",
            "--edges",
            "normal,build,dev",
            "--prefix",
            "none",
            "--format",
            "{p}|{f}",
            "--manifest-path",
            concat!(env!("CARGO_MANIFEST_DIR"), "/Cargo.toml"),
        ])
        .output()
        .expect("cargo runs");
    assert!(
        out.status.success(),
        "cargo tree failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).expect("cargo tree prints UTF-8");
    let mut map = BTreeMap::new();
    for line in text.lines() {
        let Some((pkg, feats)) = line.split_once('|') else {
            continue;
        };
        // "palette v0.7.7" or "glowscore v0.1.0 (/path)": the name is the first word.
        let name = pkg.split_whitespace().next().unwrap_or_default().to_owned();
        let feats: Vec<String> = feats
            .split(',')
            .filter(|f| !f.is_empty())
            .map(str::to_owned)
            .collect();
        map.entry(name).or_insert(feats);
    }
    map
}

#[test]
fn palette_is_built_with_libm_and_without_std() {
    // palette 0.7's own Cargo.toml: with `std` its float maths is the
    // standard library's (the platform's `cbrt`, `powf`); with `libm` and no
    // `std` it is libm's. The features are Cargo's resolved ones.
    let feats = resolved_features();
    for name in ["palette", "palette_math"] {
        let f = feats
            .get(name)
            .unwrap_or_else(|| panic!("{name} is not in the build: {feats:?}"));
        assert!(
            f.iter().any(|x| x == "libm"),
            "{name} is built without libm: {f:?}"
        );
        assert!(
            !f.iter().any(|x| x == "std"),
            "{name} is built with std, so its maths is the platform's: {f:?}"
        );
    }
    // The check would pass vacuously if the parse found nothing: libm itself
    // must be there, and so must a crate known to have features on.
    assert!(feats.contains_key("libm"), "{feats:?}");
    assert!(
        feats
            .get("serde")
            .is_some_and(|f| f.iter().any(|x| x == "derive")),
        "{feats:?}"
    );
}

#[test]
fn nalgebra_is_gone() {
    // DEVELOPERS.md, "Dependencies": the project's vectors are its own
    // (`glowscore::geom`).
    assert!(!resolved_features().contains_key("nalgebra"));
}

#[test]
fn oklab_matches_ottossons_published_test_values() {
    // B. Ottosson, "A perceptual color space for image processing" (2020),
    // table of test values: CIE XYZ (D65) -> Oklab, 3 decimals (recalled
    // from memory). XYZ is taken to linear sRGB with the IEC 61966-2-1
    // matrix (4 decimals), which costs up to 1.4e-3 against the table.
    let to_srgb = |[x, y, z]: [f64; 3]| {
        LinSrgb::new(
            3.2406 * x - 1.5372 * y - 0.4986 * z,
            -0.9689 * x + 1.8758 * y + 0.0415 * z,
            0.0557 * x - 0.2040 * y + 1.0570 * z,
        )
    };
    let table = [
        ([0.950, 1.000, 1.089], [1.000, 0.000, 0.000]),
        ([1.000, 0.000, 0.000], [0.450, 1.236, -0.019]),
        ([0.000, 1.000, 0.000], [0.922, -0.671, 0.263]),
        ([0.000, 0.000, 1.000], [0.153, -1.415, -0.449]),
    ];
    for (xyz, lab) in table {
        let got = to_oklab(to_srgb(xyz));
        for (g, w) in [got.l, got.a, got.b].into_iter().zip(lab) {
            assert!((g - w).abs() < 2e-3, "XYZ {xyz:?}: {got:?}, want {lab:?}");
        }
    }
}

#[test]
fn oklab_cube_roots_are_libms() {
    // Grey g has LMS = (g, g, g) (the rows of Ottosson's first matrix sum to
    // 1) and the second matrix's first row sums to 1, so L = cbrt(g) up to
    // the rounding of the published matrices (palette's give a constant
    // 6.5e-9 low, measured). libm's cbrt is the reference here; agreement to
    // 1e-8 relative on greys over six decades shows the conversion takes a
    // true cube root (not a table or a power with a rounded exponent).
    let mut g = 1e-6f64;
    while g <= 1.0 {
        let l = to_oklab(LinSrgb::new(g, g, g)).l;
        let rel = (l - libm::cbrt(g)).abs() / libm::cbrt(g);
        assert!(rel < 1e-8, "grey {g}: L = {l}, {rel:e} off");
        g *= 1.37;
    }
}

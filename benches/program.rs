//! The program form: its size and the time to make it, per prop, on the
//! four-minute fixtures (a 144-LED painting staff at 1000 frames/s, and two
//! poi of 1 LED at 1000 frames/s and of 72 LEDs at 500 frames/s).
//!
//! `cargo bench --bench program`; the sizes are printed first.

use criterion::{Criterion, criterion_group, criterion_main};
use glowscore::output::TableSpec;
use glowscore::output::program::encode;
use glowscore::prepared::Prepared;
use std::hint::black_box;
use std::path::Path;

fn prepared(name: &str) -> Prepared {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("benches/fixtures")
        .join(name);
    Prepared::new(glowscore::show::load(&path).expect("fixture loads")).expect("prepares")
}

fn spec(p: &Prepared, prop: usize) -> TableSpec {
    let show = p.show();
    TableSpec {
        frame_rate_hz: show.frame_rate_hz,
        leds: show.props[prop].leds,
        order: show.props[prop].wire_order,
        frame_count: p.frame_count() as u32,
    }
}

fn bench(c: &mut Criterion) {
    let mut g = c.benchmark_group("program form, one prop");
    for name in [
        "staff-painting.toml",
        "four-minutes.toml",
        "four-minutes-72.toml",
    ] {
        let p = prepared(name);
        let sizes: Vec<usize> = (0..p.show().props.len())
            .map(|i| encode(&p, i, &spec(&p, i)).unwrap().len())
            .collect();
        println!("{name}: program form bytes per prop {sizes:?}");
        g.bench_function(name, |b| {
            b.iter(|| encode(black_box(&p), 0, &spec(&p, 0)).unwrap())
        });
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);

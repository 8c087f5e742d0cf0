//! Benchmark: compiling four-minute shows (two poi; a 144-LED staff painting
//! a picture at 1000 frames/s) into every table
//! (CSV, full, compact, C header) and report.json, previews off.

use criterion::{Criterion, criterion_group, criterion_main};
use glowscore::compile::{CompileOptions, compile};
use glowscore::prepared::Prepared;

fn bench(c: &mut Criterion) {
    let dir = std::env::temp_dir().join("glowscore-bench-compile");
    let mut g = c.benchmark_group("compile");
    g.sample_size(10);
    for fixture in ["four-minutes", "four-minutes-72", "staff-painting"] {
        let path = format!(
            "{}/benches/fixtures/{fixture}.toml",
            env!("CARGO_MANIFEST_DIR")
        );
        let show = glowscore::show::load(std::path::Path::new(&path)).expect("fixture parses");
        let mut opts = CompileOptions::new(dir.join(fixture));
        opts.previews = false;
        g.bench_function(fixture, |b| {
            b.iter(|| {
                // Preparing is part of the job: the command does both.
                let prepared = Prepared::new(show.clone()).expect("prepares");
                compile(&prepared, &opts).expect("compiles").0.frames
            })
        });
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);

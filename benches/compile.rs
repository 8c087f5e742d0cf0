//! Benchmark: compiling four-minute shows (two poi; a 144-LED staff painting
//! a picture at 1000 frames/s) into every table
//! (CSV, full, compact, C header) and report.json, previews off; and the
//! whole job with its previews (one picture per section and one of the
//! show) for the eelgrass demo (goal 1.5 s) and the four-minute 144-LED staff
//! (goal 5 s).

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
    for (name, path) in [
        (
            "with-previews/eelgrass-lanterns",
            "shows/eelgrass-lanterns.toml",
        ),
        (
            "with-previews/staff-painting",
            "benches/fixtures/staff-painting.toml",
        ),
    ] {
        let path = format!("{}/{path}", env!("CARGO_MANIFEST_DIR"));
        let show = glowscore::show::load(std::path::Path::new(&path)).expect("show parses");
        let opts = CompileOptions::new(dir.join(name.replace('/', "-")));
        g.bench_function(name, |b| {
            b.iter(|| {
                let prepared = Prepared::new(show.clone()).expect("prepares");
                compile(&prepared, &opts).expect("compiles").0.frames
            })
        });
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);

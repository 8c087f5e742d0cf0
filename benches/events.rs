//! Benchmark: every event of a four-minute two-prop show with a tempo change.

use criterion::{Criterion, criterion_group, criterion_main};
use glowscore::events::find_events;
use glowscore::motion::simulate;

fn bench(c: &mut Criterion) {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/benches/fixtures/four-minutes.toml"
    );
    let show = glowscore::show::load(std::path::Path::new(path)).expect("fixture parses");
    let motions = simulate(&show);
    let n = find_events(&show, &motions).len();
    eprintln!("four-minute show: {} s, {n} events", show.end_s());
    c.bench_function("events_four_minutes", |b| {
        b.iter(|| find_events(&show, &motions).len())
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);

//! Preview render times: a 3840x2160 long exposure of 8 bars of two poi at
//! 1000 frames per second (goal: under 1 s on 2 cores, release), and how the
//! time scales with the picture size and the number of frames.

use criterion::{Criterion, criterion_group, criterion_main};
use glowscore::prepared::Prepared;
use glowscore::preview::{self, PreviewOptions};

/// Two poi, 8 bars at 120 bpm: 4 bars of extensions, 4 of four-petal antispin.
fn show(frame_rate: u32) -> glowscore::model::Show {
    let text = format!(
        r##"
[show]
frame_rate = {frame_rate}
bpm = 120
beats_per_bar = 4

[prop.left]
tether_m = 0.55
anchor_m = [-0.3, 1.35, 0.0]

[prop.right]
tether_m = 0.55
anchor_m = [0.3, 1.35, 0.0]

[pattern.ext]
plane = "wall"
beats = 2
hand_radius_m = 0.2
head_turns = 1

[pattern.flower]
plane = "wall"
beats = 4
hand_radius_m = 0.18
head_turns = -3

[[section]]
bars = [1, 4]
left = "ext"
right = {{ pattern = "ext", mirror = true }}

[[section]]
bars = [5, 8]
left = "flower"
right = {{ pattern = "flower", mirror = true, delay_beats = 0.5 }}

[[cue]]
prop = "left"
bars = [1, 8]
at = "tip"
colours = ["#ff2000", "#ffd000", "#20ff40", "#0050ff"]

[[cue]]
prop = "right"
bars = [1, 8]
at = "beat"
colours = ["deepskyblue", "#ff40a0"]
fade_beats = 0.25
"##
    );
    glowscore::show::parse("bench.toml", text).expect("the bench show is valid")
}

fn bench(c: &mut Criterion) {
    let mut g = c.benchmark_group("preview");
    g.sample_size(10);
    for (rate, w, h) in [
        (1000, 3840, 2160),
        (1000, 1920, 1080),
        (1000, 960, 540),
        (250, 3840, 2160),
        (4000, 3840, 2160),
    ] {
        let s = show(rate);
        let p = Prepared::new(s).expect("prepares");
        let opts = PreviewOptions {
            size: Some((w, h)),
            ..PreviewOptions::default()
        };
        g.bench_function(format!("{w}x{h} at {rate} fps"), |b| {
            b.iter(|| preview::render(&p, &opts).expect("renders"))
        });
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);

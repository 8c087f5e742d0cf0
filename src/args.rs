//! The command line's words: every subcommand, option and value parser.
//! clap lives here, in the binary only; the library takes plain values.

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand};
use glowscore::geom::Vec3;
use glowscore::output::TableForm;
use glowscore::preview::{self, Pinhole, PreviewOptions, Shutter, View};

/// Compiles light shows for LED props (poi, staffs and pixel strips) into
/// frame tables, long-exposure previews and safety checks.
#[derive(Parser)]
#[command(name = "glowscore", version, about, long_about = None)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
    /// Let cue pictures be read from outside the show file's folder
    /// (absolute paths, `..`, symbolic links out of it).
    #[arg(long, global = true)]
    pub allow_outside_pictures: bool,
}

/// The subcommands.
#[derive(Subcommand)]
pub enum Command {
    /// Compile the show into per-prop frame tables (CSV, binary, C header), previews and report.json.
    Compile {
        /// The show file (TOML).
        show: PathBuf,
        /// Output folder (default: out/<show name>).
        #[arg(long, value_name = "DIR")]
        out: Option<PathBuf>,
        /// Landing tolerance along the head's path, millimetres.
        #[arg(long, default_value_t = 10.0, allow_hyphen_values = true)]
        tolerance_mm: f64,
        /// Which binary form the C header embeds.
        #[arg(long, value_enum, default_value_t = HeaderForm::Compact)]
        header_form: HeaderForm,
        /// Skip the preview pictures.
        #[arg(long)]
        no_previews: bool,
        /// Leave out a text form: `csv` or `header` (may be given twice).
        #[arg(long, value_name = "FORM", value_parser = ["csv", "header"])]
        skip: Vec<String>,
        /// Print nothing but errors: no progress, no summary.
        #[arg(long, short)]
        quiet: bool,
    },
    /// Print every event of the show (tips, inner points, stalls, angles, beats, bars), sorted by time.
    Events {
        /// The show file (TOML).
        show: PathBuf,
        /// Print a JSON array instead of a table.
        #[arg(long)]
        json: bool,
        /// Only this prop's events (may be given more than once).
        #[arg(long, value_name = "NAME")]
        prop: Vec<String>,
        /// Only events of this kind: tip, inner, stall, angle, beat or bar (may be given more than once).
        #[arg(long, value_name = "KIND")]
        kind: Vec<String>,
        /// Only events in these bars, inclusive.
        #[arg(long, value_name = "A-B", value_parser = parse_bars)]
        bars: Option<(u32, u32)>,
    },
    /// Validate the show and report tension, slack, spin rates, reach, collisions, jumps, flashes, LED current and landing errors.
    Check {
        /// The show file (TOML).
        show: PathBuf,
        /// Print one JSON object instead of a readable report.
        #[arg(long)]
        json: bool,
        /// Fail (exit status 1) when there is any warning.
        #[arg(long)]
        deny_warnings: bool,
        /// Landing tolerance along the head's path, millimetres.
        #[arg(long, default_value_t = 10.0, allow_hyphen_values = true)]
        tolerance_mm: f64,
    },
    /// List the trade figures each prop can play (petals, stalls, reach, peak tension at the show's tempo), each with its pattern table.
    Patterns {
        /// The show file (TOML).
        show: PathBuf,
        /// Only this prop.
        #[arg(long, value_name = "NAME")]
        prop: Option<String>,
        /// Only figures with N petals.
        #[arg(long, value_name = "N")]
        petals: Option<u32>,
        /// Only figures whose head stays within M metres of the anchor.
        #[arg(long, value_name = "M", allow_hyphen_values = true)]
        max_reach: Option<f64>,
        /// Only figures whose head stops (stalls).
        #[arg(long)]
        stall: bool,
        /// The plane: wall, wheel or floor.
        #[arg(long, value_enum, default_value_t = PlaneArg::Wall)]
        plane: PlaneArg,
        /// Beats per hand revolution (default: the show's beats per bar).
        #[arg(long, value_name = "B")]
        beats: Option<f64>,
        /// Hand radius of the figures that are not stalls, metres.
        #[arg(long, value_name = "R", default_value_t = glowscore::commands::patterns::DEFAULT_HAND_RADIUS_M)]
        hand_radius: f64,
    },
    /// Render a long-exposure picture of the show, or of some bars of it, as a PNG or JPEG.
    Preview(Box<PreviewArgs>),
    /// Find a song's tempo, beats, downbeats and tempo changes (WAV, FLAC, Ogg Vorbis, MP3).
    Tempo {
        /// The song.
        song: PathBuf,
        /// Print one JSON object instead of TOML for a show.
        #[arg(long)]
        json: bool,
        /// Beats per bar, if known (otherwise 3 or 4 from the accents).
        #[arg(long, value_name = "N")]
        beats_per_bar: Option<u32>,
        /// Search only these tempi, e.g. 80-160 (to choose between half and double).
        #[arg(long, value_name = "LO-HI")]
        bpm_range: Option<String>,
    },
    /// Write the play page (one HTML file that shows the show moving), or serve it and rebuild on every save.
    Play {
        /// The show file (TOML).
        show: PathBuf,
        /// The page to write (replaced atomically).
        #[arg(
            long,
            value_name = "PAGE.html",
            required_unless_present = "watch",
            conflicts_with = "watch"
        )]
        out: Option<PathBuf>,
        /// Serve the page on 127.0.0.1 and push every saved change of the show to it.
        #[arg(long)]
        watch: bool,
        /// The port to serve on (default: one the system picks).
        #[arg(long, value_name = "N", requires = "watch", default_value_t = 0)]
        port: u16,
        /// A song to embed and play as the clock.
        #[arg(long, value_name = "SONG")]
        song: Option<PathBuf>,
    },
    /// Write a practice WAV: the song, a click on every beat and a tone at each colour change of a prop.
    Rehearse {
        /// The show file (TOML).
        show: PathBuf,
        /// The WAV file to write.
        #[arg(long, value_name = "FILE.wav")]
        out: PathBuf,
        /// The prop whose colour changes sound (default: the first).
        #[arg(long, value_name = "P")]
        prop: Option<String>,
        /// The song to mix in.
        #[arg(long, value_name = "SONG")]
        song: Option<PathBuf>,
    },
    /// Write a commented starter show (two poi, eight bars) to build on.
    New {
        /// The show file to write (`.toml` is added if it has no extension); never replaced.
        name: PathBuf,
    },
    /// Print a completion script for a shell (bash, zsh, fish, elvish, powershell).
    Completions {
        /// The shell.
        shell: clap_complete::Shell,
    },
}

/// A plane of motion.
#[derive(Clone, Copy, clap::ValueEnum)]
pub enum PlaneArg {
    /// Facing the audience.
    Wall,
    /// Side-on.
    Wheel,
    /// Horizontal.
    Floor,
}

impl From<PlaneArg> for glowscore::model::Plane {
    fn from(p: PlaneArg) -> Self {
        match p {
            PlaneArg::Wall => glowscore::model::Plane::Wall,
            PlaneArg::Wheel => glowscore::model::Plane::Wheel,
            PlaneArg::Floor => glowscore::model::Plane::Floor,
        }
    }
}

/// The binary form embedded in the C header.
#[derive(Clone, Copy, clap::ValueEnum)]
pub enum HeaderForm {
    /// Every frame.
    Full,
    /// Runs and fades.
    Compact,
    /// The program form: the show as the player evaluates it.
    Program,
}

impl From<HeaderForm> for TableForm {
    fn from(f: HeaderForm) -> TableForm {
        match f {
            HeaderForm::Full => TableForm::Full,
            HeaderForm::Compact => TableForm::Compact,
            HeaderForm::Program => TableForm::Program,
        }
    }
}

/// The options of `glowscore preview`.
#[derive(Args, Debug, Clone)]
pub struct PreviewArgs {
    /// The show file (TOML).
    pub show: PathBuf,
    /// The picture to write: FILE.png, or FILE.jpg / FILE.jpeg for a JPEG
    /// (replaced atomically; its folder is made if missing).
    #[arg(long, value_name = "FILE.png")]
    pub out: PathBuf,
    /// Bars the shutter is open for, inclusive (default: the whole show).
    #[arg(long, value_name = "A-B", value_parser = parse_bars)]
    pub bars: Option<(u32, u32)>,
    /// Picture size in pixels (default 1600x1200).
    #[arg(long, value_name = "WxH", value_parser = parse_size)]
    pub size: Option<(u32, u32)>,
    /// Stage area shown, metres, in the view's screen coordinates (front: x, y;
    /// side: z, y; top: x, -z); default: fitted to the light.
    #[arg(long, value_name = "X0,Y0,X1,Y1", allow_hyphen_values = true, value_parser = parse_viewport)]
    pub viewport: Option<[f64; 4]>,
    /// Shutter time, seconds, from the opening (--start-s, or the first of --bars).
    #[arg(long, value_name = "S", allow_hyphen_values = true)]
    pub exposure_s: Option<f64>,
    /// Opening time, seconds from frame 0 (default 0, or the first of --bars).
    #[arg(
        long,
        value_name = "S",
        allow_hyphen_values = true,
        conflicts_with = "bars"
    )]
    pub start_s: Option<f64>,
    /// Exposure compensation from the automatic meter, stops (+1 doubles the light).
    #[arg(
        long,
        value_name = "STOPS",
        allow_hyphen_values = true,
        default_value_t = 0.0
    )]
    pub ev: f64,
    /// Orthographic view: front (the audience's), side (from the audience's left) or top.
    #[arg(long, value_name = "VIEW", default_value = "front", value_parser = parse_view)]
    pub view: View,
    /// A perspective photo from this eye point, stage metres.
    #[arg(long, value_name = "X,Y,Z", allow_hyphen_values = true, value_parser = parse_point)]
    pub camera: Option<[f64; 3]>,
    /// Where the camera looks, stage metres (default: the middle of the light).
    #[arg(long, value_name = "X,Y,Z", allow_hyphen_values = true, value_parser = parse_point, requires = "camera")]
    pub look_at: Option<[f64; 3]>,
    /// The camera's vertical field of view, degrees.
    #[arg(long, value_name = "DEG", default_value_t = preview::DEFAULT_FOV_DEG, requires = "camera")]
    pub fov: f64,
    /// Draws a scale bar in metres (orthographic views).
    #[arg(long)]
    pub scale_bar: bool,
    /// The stage behind the light: #rrggbb or a CSS colour name.
    #[arg(long, value_name = "COLOUR", value_parser = parse_background)]
    pub background: Option<[u8; 3]>,
}

fn numbers<const N: usize>(s: &str, what: &str) -> Result<[f64; N], String> {
    let parts: Vec<&str> = s.split(',').map(str::trim).collect();
    let bad = || format!("expected {what}, got `{s}`");
    if parts.len() != N {
        return Err(bad());
    }
    let mut out = [0.0; N];
    for (o, p) in out.iter_mut().zip(&parts) {
        *o = p.parse::<f64>().map_err(|_| bad())?;
        if !o.is_finite() {
            return Err(bad());
        }
    }
    Ok(out)
}

/// Parses `A-B` (bars, from 1) or a single bar `A`.
pub fn parse_bars(s: &str) -> Result<(u32, u32), String> {
    let bad = || format!("expected bars as A-B (e.g. 5-8), got `{s}`");
    let (a, b) = s.split_once('-').unwrap_or((s, s));
    let a: u32 = a.trim().parse().map_err(|_| bad())?;
    let b: u32 = b.trim().parse().map_err(|_| bad())?;
    if a == 0 || b < a {
        return Err(format!("bars count from 1 and A <= B, got `{s}`"));
    }
    Ok((a, b))
}

/// Parses `WxH` in pixels.
pub fn parse_size(s: &str) -> Result<(u32, u32), String> {
    let bad = || format!("expected WxH in pixels (e.g. 1920x1080), got `{s}`");
    let (w, h) = s.split_once(['x', 'X']).ok_or_else(bad)?;
    let w: u32 = w.trim().parse().map_err(|_| bad())?;
    let h: u32 = h.trim().parse().map_err(|_| bad())?;
    if w == 0 || h == 0 || w > preview::MAX_SIDE || h > preview::MAX_SIDE {
        return Err(format!(
            "each side must be 1 to {} pixels, got `{s}`",
            preview::MAX_SIDE
        ));
    }
    Ok((w, h))
}

/// Parses `X0,Y0,X1,Y1` in metres, with X1 > X0 and Y1 > Y0.
pub fn parse_viewport(s: &str) -> Result<[f64; 4], String> {
    let v = numbers::<4>(s, "X0,Y0,X1,Y1 in metres (e.g. -1.8,0.4,1.8,2.4)")?;
    if v[2] <= v[0] || v[3] <= v[1] {
        return Err(format!(
            "X1 must be greater than X0 and Y1 than Y0, got `{s}`"
        ));
    }
    Ok(v)
}

/// Parses `X,Y,Z` in metres.
pub fn parse_point(s: &str) -> Result<[f64; 3], String> {
    numbers::<3>(s, "X,Y,Z in metres (e.g. 2,1.6,6)")
}

/// Parses a view name.
pub fn parse_view(s: &str) -> Result<View, String> {
    View::from_name(s).ok_or_else(|| format!("expected front, side or top, got `{s}`"))
}

/// Parses a background colour.
pub fn parse_background(s: &str) -> Result<[u8; 3], String> {
    glowscore::colour::parse_colour(s)
        .map(|c| [c.red, c.green, c.blue])
        .map_err(|e| e.to_string())
}

impl PreviewArgs {
    /// The renderer's options.
    pub fn options(&self) -> PreviewOptions {
        PreviewOptions {
            size: self.size,
            view: self.view,
            viewport: self.viewport,
            pinhole: self.camera.map(|e| Pinhole {
                eye_m: Vec3::from(e),
                look_at_m: self.look_at.map(Vec3::from),
                fov_deg: self.fov,
            }),
            shutter: Shutter {
                bars: self.bars,
                start_s: self.start_s,
                exposure_s: self.exposure_s,
            },
            ev_stops: self.ev,
            background: self.background.unwrap_or(preview::DEFAULT_BACKGROUND),
            scale_bar: self.scale_bar,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn option_values_parse_and_bad_ones_are_refused() {
        assert_eq!(parse_bars("5-8"), Ok((5, 8)));
        assert_eq!(parse_bars("3"), Ok((3, 3)));
        assert!(parse_bars("8-5").is_err() && parse_bars("0-2").is_err());
        assert_eq!(parse_size("160x120"), Ok((160, 120)));
        assert!(parse_size("0x10").is_err() && parse_size("12").is_err());
        assert_eq!(
            parse_viewport("-1.8,0.4,1.8,2.4"),
            Ok([-1.8, 0.4, 1.8, 2.4])
        );
        assert!(parse_viewport("1,0,-1,2").is_err());
        assert!(parse_viewport("1,0,nan,2").is_err());
        assert_eq!(parse_point("-2, 1.5, 6"), Ok([-2.0, 1.5, 6.0]));
        assert!(parse_view("back").is_err());
    }
}

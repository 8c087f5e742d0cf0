//! glowscore: compiles LED prop light shows into per-frame colour tables,
//! long-exposure previews and a safety report.
//!
//! The pipeline, one module per stage:
//! `show` (TOML text to a validated [`model::Show`]) -> `motion` (hand and
//! head paths, tempo map) -> `events` (tips, stalls, angles, beats by root
//! finding) -> `cues` (colours onto frames) -> `output` (tables), `preview`
//! (the renderer) and `check` (the report).
#![forbid(unsafe_code)]

pub mod check;
pub mod colour;
pub mod commands;
pub mod compile;
pub mod cues;
pub mod diag;
pub mod events;
pub mod flash;
pub mod folder;
pub mod geom;
pub mod model;
pub mod motion;
pub mod music;
pub mod num;
pub mod output;
pub mod picture;
pub mod play;
pub mod power;
pub mod prepared;
pub mod preview;
pub mod show;

//! The one integration test binary: each module was once its own test file.

mod check_cli;
mod check_coverage;
mod check_hardware;
mod check_light;
mod check_physics;
mod common;
mod compile;
mod conventions_doc;
mod demo_golden;
mod deterministic_maths;
mod errors;
mod event_properties;
mod format_docs;
mod formats;
mod formats_props;
mod handbook_curves;
mod music;
mod parser_fuzz;
mod picture;
mod pipeline;
mod preview_output;
mod preview_paint;
mod preview_physics;
mod staff_kinematics;
mod strips;
mod trade_facts;

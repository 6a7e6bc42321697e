//! fillwright: real-gas fill planning for calibration gas mixtures.
//!
//! Dependencies flow one way, from the science to the screen:
//! `units → gas → mixture → thermo → cli`. Everything except `cli` and `config` is pure:
//! no file, terminal or clock access.

// `!(x > 0.0)` is the deliberate NaN-rejecting form throughout the numerical code.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

pub mod bench;
pub mod certify;
pub mod checks;
pub mod cli;
pub mod config;
pub mod gas;
pub mod kept;
pub mod library;
pub mod mixture;
pub mod plan;
pub mod print;
pub mod recipe;
pub mod record;
pub mod ron_format;
pub mod settings;
pub mod speed;
pub mod state;
pub mod thermo;
pub mod tui;
pub mod units;
pub mod verification;

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

/// For the tests that keep a data file and its compiled-in Rust (`*_data.rs`) the same.
#[cfg(test)]
pub(crate) mod compiled_data {
    /// Compare `made` (the Rust made from the data files) with the file at `path` (from the
    /// crate's root), writing it first under `FILLWRIGHT_REGENERATE`; `from` names the data
    /// files in the failure's message.
    pub(crate) fn is_current(path: &str, made: &str, from: &str) {
        let full = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(path);
        if std::env::var_os("FILLWRIGHT_REGENERATE").is_some() {
            std::fs::write(&full, made).unwrap();
        }
        let have = std::fs::read_to_string(&full).unwrap_or_default();
        assert!(have == made, "{path} is not {from}: run FILLWRIGHT_REGENERATE=1 cargo test --lib the_compiled_data");
    }
}

//! What is printed: presenters of the core's results as text, pure functions that the
//! command line and the screen both call (the screen never reaches into the command line
//! for them).

pub mod fill_sheet;

pub use fill_sheet::{fill_sheet, stop_banner, stop_banner_for};

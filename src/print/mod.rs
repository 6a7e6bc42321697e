//! What is printed: presenters of the core's results as text, pure functions that the
//! command line and the screen both call (the screen never reaches into the command line
//! for them).

/// `writeln!` into a `String` (which cannot fail): `put!(out)` ends a line, `put!(out, ...)`
/// writes one.
macro_rules! put {
    ($out:expr) => {
        $out.push('\n')
    };
    ($out:expr, $($arg:tt)*) => {{
        use std::fmt::Write as _;
        let _ = writeln!($out, $($arg)*);
    }};
}

pub mod certificate;
pub mod check;
pub mod fill_sheet;
pub mod records;
pub mod state;

pub use fill_sheet::{bench_form, cautions, fill_sheet, stop_banner, stop_banner_for};

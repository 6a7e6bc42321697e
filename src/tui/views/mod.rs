//! The five views of the screen. Each is one module that draws itself and handles its own
//! keys behind the small [`Screen`] trait; the dispatcher in `update` takes the keys every
//! view shares (help, quit, views, save) and hands the rest to the view shown.

pub mod editor;
pub mod library;
pub mod models;
pub mod screening;
pub mod sheet;

use ratatui::layout::Rect;
use ratatui::Frame;

use crate::plan::StepFlag;

use super::context::{Context, Key};
use super::model::{Model, View};
use super::theme::Theme;

/// One view: how it draws, which keys it takes, and what its help says.
pub trait Screen: Sync {
    /// Draw the view into `area` (the body between the header and the status line).
    fn draw(&self, model: &Model, theme: &Theme, frame: &mut Frame, area: Rect);
    /// A key the shared keys left to this view.
    fn on_key(&self, model: &mut Model, key: Key, ctx: &mut Context);
    /// True while the view takes every key itself (a field or a search being typed).
    fn typing(&self, _model: &Model) -> bool {
        false
    }
    /// Whether Esc goes back to the Library (else the view takes Esc itself).
    fn leaves_on_esc(&self) -> bool {
        true
    }
    /// The key hints of the status line, most important first, separated by ` · `.
    fn hints(&self, _model: &Model) -> &'static str {
        "? help · Tab next view · s save · Esc library · q quit"
    }
    /// The view's own lines of the help overlay (the shared keys follow them).
    fn help(&self) -> &'static [&'static str];
}

/// The module that owns `view`.
pub fn of(view: View) -> &'static dyn Screen {
    match view {
        View::Library => &library::Library,
        View::Editor => &editor::Editor,
        View::Sheet => &sheet::Sheet,
        View::Models => &models::Models,
        View::Checks => &screening::Screening,
    }
}

/// The mark of a step on the sheet: `L` liquid at the fill temperature, `c` liquid on
/// cooling, `!` too small to dose; None for a plain step.
pub fn step_mark(s: &crate::plan::Step) -> Option<&'static str> {
    if s.liquid_at_fill {
        Some("L")
    } else if s.flags.iter().any(|f| matches!(f, StepFlag::AboveDewPoint | StepFlag::CondensesIfCooled)) {
        Some("c")
    } else if s.flags.iter().any(|f| f.too_small()) {
        Some("!")
    } else {
        None
    }
}

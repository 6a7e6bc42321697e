//! The settings editor: every field of `settings.ron` on one overlay. Choices cycle with
//! Enter; values are typed in a prompt and checked before anything is written; the file is
//! written whole and atomically, and the screen takes the new settings at once.

use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::text::Line;
use ratatui::Frame;

use crate::settings::{AirConditions, Settings};
use crate::thermo::Model as Eos;
use crate::tui::context::{input, Context, Key};
use crate::tui::model::{BenchLimits, Model, Overlay, Prompt};
use crate::tui::theme::{boxed, centered, Theme};
use crate::units::{PressureUnit, TemperatureUnit};

/// The editable fields, in the order shown.
pub const FIELDS: [&str; 13] = [
    "pressure_unit",
    "temperature_unit",
    "default_model",
    "ambient",
    "gauge_resolution",
    "scale_resolution",
    "min_storage_temperature",
    "max_service_temperature",
    "condensation_margin",
    "git_commit_on_save",
    "combine_verification_uncertainty",
    "weighing_check_factor",
    "air_conditions",
];

/// What each field is, for the overlay.
pub fn label(field: &str) -> &'static str {
    match field {
        "pressure_unit" => "pressure unit",
        "temperature_unit" => "temperature unit",
        "default_model" => "default model",
        "ambient" => "ambient pressure",
        "gauge_resolution" => "gauge resolution",
        "scale_resolution" => "scale resolution",
        "min_storage_temperature" => "lowest storage temperature",
        "max_service_temperature" => "highest service temperature",
        "condensation_margin" => "condensation margin",
        "combine_verification_uncertainty" => "combine verification u",
        "weighing_check_factor" => "confirm weighings off by ×",
        "air_conditions" => "air conditions asked",
        _ => "commit saves to git",
    }
}

/// The settings as the file holds them (defaults where there is none).
pub fn current(ctx: &Context) -> Settings {
    ctx.settings_file
        .as_ref()
        .and_then(|p| crate::library::read_regular(p, 64 * 1024).ok())
        .and_then(|t| Settings::parse(&t, "settings.ron").ok())
        .unwrap_or_default()
}

/// A field's value as shown and typed.
pub fn value(s: &Settings, field: &str) -> String {
    match field {
        "pressure_unit" => match s.pressure_unit {
            PressureUnit::Bar => "bar",
            PressureUnit::Psi => "psi",
            PressureUnit::MPa => "MPa",
            PressureUnit::KPa => "kPa",
        }
        .into(),
        "temperature_unit" => format!("{:?}", s.temperature_unit),
        "default_model" => s.default_model.map_or("by the gases".into(), |m| m.key().to_string()),
        "ambient" => s.ambient.clone(),
        "gauge_resolution" => s.gauge_resolution.clone(),
        "scale_resolution" => s.scale_resolution.clone(),
        "min_storage_temperature" => s.min_storage_temperature.clone(),
        "max_service_temperature" => s.max_service_temperature.clone(),
        "condensation_margin" => s.condensation_margin.clone(),
        "combine_verification_uncertainty" => if s.combine_verification_uncertainty { "yes" } else { "no" }.into(),
        "weighing_check_factor" => format!("{}", s.weighing_check_factor),
        "air_conditions" => match s.air_conditions {
            AirConditions::None => "never",
            AirConditions::Once => "once, with the empty cylinder",
            AirConditions::EachWeighing => "at every weighing",
        }
        .into(),
        _ => if s.git_commit_on_save { "yes" } else { "no" }.into(),
    }
}

/// Enter on a field: a choice moves to the next one; a value opens a prompt.
pub fn on_enter(model: &mut Model, ctx: &mut Context, selected: usize) {
    let field = FIELDS[selected.min(FIELDS.len() - 1)];
    let mut s = current(ctx);
    match field {
        "pressure_unit" => {
            s.pressure_unit = match s.pressure_unit {
                PressureUnit::Bar => PressureUnit::Psi,
                PressureUnit::Psi => PressureUnit::MPa,
                PressureUnit::MPa => PressureUnit::KPa,
                PressureUnit::KPa => PressureUnit::Bar,
            }
        }
        "temperature_unit" => {
            s.temperature_unit = match s.temperature_unit {
                TemperatureUnit::C => TemperatureUnit::K,
                TemperatureUnit::K => TemperatureUnit::F,
                TemperatureUnit::F => TemperatureUnit::C,
            }
        }
        "default_model" => {
            s.default_model = match s.default_model {
                None => Some(Eos::ALL[0]),
                Some(m) => Eos::ALL.iter().position(|x| *x == m).and_then(|i| Eos::ALL.get(i + 1)).copied(),
            }
        }
        "git_commit_on_save" => s.git_commit_on_save = !s.git_commit_on_save,
        "combine_verification_uncertainty" => s.combine_verification_uncertainty = !s.combine_verification_uncertainty,
        "air_conditions" => {
            s.air_conditions = match s.air_conditions {
                AirConditions::None => AirConditions::Once,
                AirConditions::Once => AirConditions::EachWeighing,
                AirConditions::EachWeighing => AirConditions::None,
            }
        }
        _ => {
            model.overlay = Overlay::Prompt { purpose: Prompt::Setting(selected), input: input(&value(&s, field)) };
            model.status = format!("{}: type the new value; Enter keeps it, Esc cancels", label(field));
            return;
        }
    }
    apply(model, ctx, &s, selected);
}

/// A typed value for field `selected`: checked with the whole file, then written.
pub fn on_value(model: &mut Model, ctx: &mut Context, selected: usize, text: &str) {
    let field = FIELDS[selected.min(FIELDS.len() - 1)];
    let mut s = current(ctx);
    if field == "weighing_check_factor" {
        match text.trim().parse::<f64>() {
            Ok(f) => s.weighing_check_factor = f,
            Err(_) => {
                model.overlay = Overlay::Prompt { purpose: Prompt::Setting(selected), input: input(text) };
                model.status = "a factor is a plain number, e.g. 2.0 (Esc cancels)".into();
                return;
            }
        }
    }
    let mut unused = String::new();
    let slot = match field {
        "ambient" => &mut s.ambient,
        "gauge_resolution" => &mut s.gauge_resolution,
        "scale_resolution" => &mut s.scale_resolution,
        "min_storage_temperature" => &mut s.min_storage_temperature,
        "max_service_temperature" => &mut s.max_service_temperature,
        "condensation_margin" => &mut s.condensation_margin,
        _ => &mut unused,
    };
    *slot = text.trim().to_string();
    if let Err(e) = s.resolve("", "settings") {
        // Refused: the prompt stays with what was typed.
        model.overlay = Overlay::Prompt { purpose: Prompt::Setting(selected), input: input(text) };
        model.status = format!("{} (Esc cancels)", e.message);
        return;
    }
    apply(model, ctx, &s, selected);
}

/// Write the settings file and take the new settings on the screen.
fn apply(model: &mut Model, ctx: &mut Context, s: &Settings, selected: usize) {
    let resolved = match s.resolve("", "settings") {
        Ok(r) => r,
        Err(e) => {
            model.status = e.message;
            model.overlay = Overlay::Settings { selected, values: Box::new(current(ctx)) };
            return;
        }
    };
    let Some(path) = ctx.settings_file.clone() else {
        model.status = "no config folder: the settings cannot be written".into();
        return;
    };
    let text = match ron::ser::to_string_pretty(s, ron::ser::PrettyConfig::default()) {
        Ok(t) => t + "\n",
        Err(e) => {
            model.status = format!("the settings could not be written: {e}");
            return;
        }
    };
    if let Some(dir) = path.parent() {
        let _ = std::fs::create_dir_all(dir);
    }
    match crate::library::atomic::write(&path, text.as_bytes()) {
        Ok(()) => {
            ctx.library.git_commit = resolved.git_commit_on_save;
            model.shown = resolved.shown;
            model.limits = BenchLimits::of(&resolved);
            ctx.settings = resolved;
            if let Some(doc) = model.doc.as_mut() {
                crate::tui::document::recompute_doc(doc, ctx);
            }
            let field = FIELDS[selected.min(FIELDS.len() - 1)];
            model.status = format!("{} is now {}; written to {}", label(field), value(s, field), path.display());
        }
        Err(e) => model.status = format!("the settings were not written: {e}"),
    }
    model.overlay = Overlay::Settings { selected, values: Box::new(current(ctx)) };
}

/// Keys of the settings list.
pub fn on_key(model: &mut Model, ctx: &mut Context, key: Key, mut selected: usize, values: Box<Settings>) {
    match key {
        Key::Up | Key::Char('k') => {
            selected = selected.saturating_sub(1);
            model.overlay = Overlay::Settings { selected, values };
        }
        Key::Down | Key::Char('j') => {
            selected = (selected + 1).min(FIELDS.len() - 1);
            model.overlay = Overlay::Settings { selected, values };
        }
        Key::Enter | Key::Char(' ') => on_enter(model, ctx, selected),
        _ => model.status = "settings closed".into(),
    }
}

/// The settings and their values.
pub fn draw(theme: &Theme, frame: &mut Frame, area: Rect, selected: &usize, values: &Settings) {
    let s = values;
    let mut lines: Vec<Line> = FIELDS
        .iter()
        .enumerate()
        .map(|(k, f)| {
            let text = format!("{} {:<28} {}", if k == *selected { "▶" } else { " " }, label(f), value(s, f));
            Line::styled(text, if k == *selected { theme.selected() } else { Style::default() })
        })
        .collect();
    lines.push(Line::styled("↑↓ choose · Enter change · Esc close", theme.dim()));
    let h = lines.len() as u16 + 2;
    boxed(frame, centered(area, 60, h), "Settings (settings.ron)", lines);
}

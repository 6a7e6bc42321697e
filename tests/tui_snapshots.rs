//! Snapshots of every view at 80×24 and 120×40 on the demo recipes (insta; review changes
//! with `cargo insta review`, or regenerate with INSTA_UPDATE=always cargo test --test tui_snapshots).

mod common;

use fillwright::tui::scenes;

#[test]
fn every_view_at_80_by_24_and_120_by_40() {
    let dir = common::temp_dir().join(format!("fillwright-snap-{}", std::process::id()));
    for (name, scene) in scenes::scenes() {
        for (w, h) in [(80u16, 24u16), (120, 40)] {
            let buffer = scenes::render(&dir, scene.as_ref(), w, h, false);
            let text = scenes::text(&buffer);
            insta::assert_snapshot!(format!("{name}_{w}x{h}"), text);
        }
    }
}

#[test]
fn a_terminal_below_the_minimum_says_so() {
    let dir = common::temp_dir().join(format!("fillwright-snap-small-{}", std::process::id()));
    let scenes = scenes::scenes();
    let buffer = scenes::render(&dir, scenes[1].1.as_ref(), 50, 12, false);
    let text = scenes::text(&buffer);
    assert!(text.contains("needs at least") && text.contains("80×24"), "{text}");
    insta::assert_snapshot!("too_small_50x12", text);
    // 60×20 is below it too: the notice says what to do, instead of views with cut columns.
    let text = scenes::text(&scenes::render(&dir, scenes[1].1.as_ref(), 60, 20, false));
    assert!(text.contains("is 60×20") && text.contains("Enlarge the window"), "{text}");
    // At 80×24 the screen draws.
    let text = scenes::text(&scenes::render(&dir, scenes[1].1.as_ref(), 80, 24, false));
    assert!(!text.contains("needs at least"), "{text}");
}

#[test]
fn no_colour_means_no_colour() {
    let dir = common::temp_dir().join(format!("fillwright-snap-nocolor-{}", std::process::id()));
    for (_, scene) in scenes::scenes() {
        let buffer = scenes::render(&dir, scene.as_ref(), 80, 24, false);
        for cell in buffer.content() {
            assert_eq!(cell.fg, ratatui::style::Color::Reset);
            assert_eq!(cell.bg, ratatui::style::Color::Reset);
        }
    }
}

#[test]
fn the_screen_shows_the_units_of_the_settings() {
    use fillwright::units::{PressureUnit, Shown, TemperatureUnit};
    let dir = common::temp_dir().join(format!("fillwright-snap-units-{}", std::process::id()));
    let scenes = scenes::scenes();
    let sheet = scenes.iter().find(|s| s.0 == "fill-sheet").unwrap();
    let shown = Shown { pressure: PressureUnit::Psi, temperature: TemperatureUnit::F };
    let text = scenes::text(&scenes::render_in(&dir, sheet.1.as_ref(), 80, 24, false, shown));
    assert!(text.contains("stop psi"), "{text}");
    // 22 °C planned and 28 °C typed are 71.6 °F and 82.4 °F.
    assert!(text.contains("71.6 °F") && text.contains("82.4 °F"), "{text}");
    // The last stop reading of the flue-gas span, 155.562 bar at 22 °C (GERG-2008), is 2256.24 psi.
    assert!(text.contains("2256.24"), "{text}");
}

//! Snapshots of every view at 80×24 and 120×40 on the demo recipes (insta; review changes
//! with `cargo insta review`, or regenerate with INSTA_UPDATE=always cargo test --test tui_snapshots).

use fillwright::tui::scenes;

#[test]
fn every_view_at_80_by_24_and_120_by_40() {
    let dir = std::env::temp_dir().join(format!("fillwright-snap-{}", std::process::id()));
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
    let dir = std::env::temp_dir().join(format!("fillwright-snap-small-{}", std::process::id()));
    let scenes = scenes::scenes();
    let buffer = scenes::render(&dir, scenes[1].1.as_ref(), 50, 12, false);
    let text = scenes::text(&buffer);
    assert!(text.contains("needs at least") && text.contains("60×16"), "{text}");
    insta::assert_snapshot!("too_small_50x12", text);
}

#[test]
fn no_colour_means_no_colour() {
    let dir = std::env::temp_dir().join(format!("fillwright-snap-nocolor-{}", std::process::id()));
    for (_, scene) in scenes::scenes() {
        let buffer = scenes::render(&dir, scene.as_ref(), 80, 24, false);
        for cell in buffer.content() {
            assert_eq!(cell.fg, ratatui::style::Color::Reset);
            assert_eq!(cell.bg, ratatui::style::Color::Reset);
        }
    }
}

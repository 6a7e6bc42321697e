//! Regenerate `screenshots/*.svg`: every view on the demo recipes, from the test backend.
//! Run: cargo run --example screenshots

fn main() -> std::io::Result<()> {
    let out = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("screenshots");
    std::fs::create_dir_all(&out)?;
    let dir = std::env::temp_dir().join(format!("fillwright-screenshots-{}", std::process::id()));
    for (name, scene) in fillwright::tui::scenes::scenes() {
        for (w, h) in [(80u16, 24u16), (120, 40)] {
            let buffer = fillwright::tui::scenes::render(&dir, scene.as_ref(), w, h, true);
            let path = out.join(format!("{name}-{w}x{h}.svg"));
            std::fs::write(&path, fillwright::tui::svg::render(&buffer))?;
            println!("wrote {}", path.display());
        }
    }
    let _ = std::fs::remove_dir_all(&dir);
    Ok(())
}

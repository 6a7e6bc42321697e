fn main() {
    let catalogue = fillwright::gas::Catalogue::built_in();
    let settings = fillwright::settings::Settings::default().resolve("", "defaults").unwrap();
    for name in ["flue-gas-span", "pipeline-ng-9", "lpg-in-methane"] {
        let text = fillwright::recipe::demo::find(name).unwrap();
        let recipe = fillwright::recipe::Recipe::parse(text, name).unwrap();
        for _ in 0..200 {
            let _ = fillwright::tui::model::Computed::of(&recipe, &catalogue, &settings);
        }
        eprintln!("{name}");
        std::env::set_var("FW_T", "1");
        let t = std::time::Instant::now();
        let _ = fillwright::tui::model::Computed::of(&recipe, &catalogue, &settings);
        eprintln!("total {:?}", t.elapsed());
        std::env::remove_var("FW_T");
    }
}

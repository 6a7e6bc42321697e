fn main() {
    let catalogue = fillwright::gas::Catalogue::built_in();
    let settings = fillwright::settings::Settings::default().resolve("", "defaults").unwrap();
    let name = std::env::args().nth(1).unwrap_or("pipeline-ng-9".into());
    let text = fillwright::recipe::demo::find(&name).unwrap();
    let recipe = fillwright::recipe::Recipe::parse(text, &name).unwrap();
    for _ in 0..300 {
        let _ = fillwright::tui::model::Computed::of(&recipe, &catalogue, &settings);
    }
}

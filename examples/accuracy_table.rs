//! Print the README table of composition errors from following each model's plan,
//! for the demo recipes. Run: cargo run --example accuracy_table

fn main() {
    let catalogue = fillwright::gas::Catalogue::built_in();
    print!("{}", fillwright::plan::accuracy::markdown_table(&catalogue));
}

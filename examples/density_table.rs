//! Print the README table of density deviations from GERG-2008 at 15 °C.
//! Run: cargo run --example density_table

fn main() {
    let catalogue = fillwright::gas::Catalogue::built_in();
    print!("{}", fillwright::thermo::survey::markdown_table(&catalogue));
}

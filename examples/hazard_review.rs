//! The hazard values marked "from memory" (no registry library carries them), as the
//! README's table for review. Run: cargo run --example hazard_review

fn main() {
    print!("{}", fillwright::checks::hazards::from_memory_table(&fillwright::gas::Catalogue::built_in()));
}

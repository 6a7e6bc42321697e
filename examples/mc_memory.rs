//! Peak memory and time of the certificate's Monte Carlo at many draws: the memory must
//! not grow with the number of draws (the draws are made in chunks and counted in bins).
//!
//!     cargo run --release --example mc_memory -- 10000000
//!
//! prints the draws, the seconds, and the process's peak resident memory (VmHWM) in MiB,
//! for 10⁵ draws and for the number given, in one run, so the two can be compared.

use fillwright::gas::Catalogue;
use fillwright::record::{self, Record};
use fillwright::thermo::Model;

fn peak_mib() -> f64 {
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    let kib: f64 = status
        .lines()
        .find(|l| l.starts_with("VmHWM:"))
        .and_then(|l| l.split_whitespace().nth(1))
        .and_then(|v| v.parse().ok())
        .unwrap_or(f64::NAN);
    kib / 1024.0
}

fn main() {
    let draws: usize = std::env::args().nth(1).and_then(|a| a.parse().ok()).unwrap_or(10_000_000);
    let text = std::fs::read_to_string("tests/records/flue-gas-made.ron").expect("run from the repository root");
    let record = Record::parse(&text, "flue-gas-made").expect("the test record parses");
    let catalogue = Catalogue::built_in();
    let checked = record.check(&catalogue, &record::no_lookup, &text, "flue-gas-made").expect("the record checks");
    for n in [100_000, draws] {
        let start = std::time::Instant::now();
        let e = record::evaluate(&checked, &catalogue, Model::Gerg, None, &[], n, record::DEFAULT_SEED)
            .expect("the record evaluates");
        println!(
            "{n:>10} draws  {:>7.2} s  peak {:>7.1} MiB  CO2 95 % interval {:.6} to {:.6}",
            start.elapsed().as_secs_f64(),
            peak_mib(),
            e.monte_carlo.low[2],
            e.monte_carlo.high[2]
        );
    }
}

//! `cargo bench --bench panel`: the whole recompute over a seeded generated panel of
//! recipes (`fillwright::speed::panel`: calibration blends, methane-rich blends near
//! methane's critical region, natural gases of 9 and wide blends of 12–21 components
//! with heavy traces), the 21-component plans, and whole processes: `check` and `list` of
//! generated libraries with their peak memory, and a `plan` beside `--version`.
//!
//! Each recipe is recomputed once as an edit would (its compositions new to the caches) —
//! the screen's synchronous estimate (phases by Peng–Robinson) and the whole recompute with
//! the reference equations' phases (what the screen receives from its second thread, and
//! what `plan` and `check` compute) — timed in wall time and in the process's CPU time
//! (both cores counted). Printed as Markdown tables: median, 99th percentile and maximum.
//!
//! Options (after `--`): `--count N` recipes (default 300), `--seed S` (default 2026),
//! `--check N,N,…` library sizes for `check` and `list` (default 1000,10000; `0` for none),
//! `--only KIND` one kind of the panel, `--profile estimate|reference|plan|plan-estimate`
//! only that recompute of each recipe (`plan`: the plan alone; `plan-estimate`: the plan
//! with Peng–Robinson's phases; nothing kept), ten times, and nothing else (for a profiler),
//! `--write-library DIR` the library of the first `--check` size into DIR and nothing else
//! (to profile a process on), `--each 1` each recipe's times, and its plan and screening
//! from the whole recompute and from the screen's estimate as JSON (to compare two builds'
//! results).
//!
//! The peak memory of a process is what `wait4` reports, which on Linux counts the pages
//! of this bench process the child shared until its `exec`: the `--version` row is the
//! floor under every other (measure a process alone with `/usr/bin/time -f %M` to see it
//! without that floor).

use std::process::{Command, Stdio};
use std::time::Instant;

use fillwright::speed::{panel, PANEL_KINDS};
use fillwright::tui::model::Computed;

/// This process's CPU time so far, all threads, seconds.
fn cpu_seconds() -> f64 {
    let mut ts = libc::timespec { tv_sec: 0, tv_nsec: 0 };
    // SAFETY: clock_gettime writes the timespec it is given; the clock id is a constant.
    unsafe { libc::clock_gettime(libc::CLOCK_PROCESS_CPUTIME_ID, &mut ts) };
    ts.tv_sec as f64 + ts.tv_nsec as f64 * 1e-9
}

/// (wall, CPU) seconds of one call.
fn timed<T>(f: impl FnOnce() -> T) -> (f64, f64, T) {
    let (w, c) = (Instant::now(), cpu_seconds());
    let out = f();
    (w.elapsed().as_secs_f64(), cpu_seconds() - c, out)
}

fn percentile(values: &[f64], q: f64) -> f64 {
    let mut v = values.to_vec();
    v.sort_by(f64::total_cmp);
    if v.is_empty() {
        return f64::NAN;
    }
    v[((q * (v.len() - 1) as f64).round() as usize).min(v.len() - 1)]
}

fn ms(s: f64) -> String {
    format!("{:.2} ms", s * 1e3)
}

fn stats(values: &[f64]) -> String {
    format!("{} / {} / {}", ms(percentile(values, 0.5)), ms(percentile(values, 0.99)), ms(percentile(values, 1.0)))
}

struct Row {
    kind: &'static str,
    planned: bool,
    estimate: (f64, f64),
    reference: (f64, f64),
}

fn option(args: &[String], name: &str) -> Option<String> {
    args.iter().position(|a| a == name).and_then(|i| args.get(i + 1).cloned())
}

/// `--each`: each recipe's times, and its plan and screening from the whole recompute and
/// from the screen's estimate, as one line of JSON (to compare two builds' results).
fn each(
    recipes: &[(&str, fillwright::recipe::Recipe)],
    catalogue: &fillwright::gas::Catalogue,
    settings: &fillwright::settings::Resolved,
) {
    let results = |c: &Computed| match (&c.plan, &c.order) {
        (Ok(p), Ok(o)) => {
            let checks: Vec<serde_json::Value> = c
                .checks
                .iter()
                .flatten()
                .map(|c| serde_json::json!({"id": c.id, "severity": format!("{:?}", c.severity), "data": c.data}))
                .collect();
            let plan = fillwright::cli::plan::plan_json(p, o, catalogue);
            Some(serde_json::json!({"plan": plan, "checks": checks}))
        }
        _ => None,
    };
    for (i, (kind, r)) in recipes.iter().enumerate() {
        let (w, _, full) = timed(|| Computed::of(r, catalogue, settings));
        let (e, _, estimate) = timed(|| Computed::estimate(r, catalogue, settings));
        let json = match (results(&full), results(&estimate)) {
            (Some(full), estimate) => serde_json::json!({"whole": full, "estimate": estimate}).to_string(),
            _ => "-".into(),
        };
        println!("{i} {kind} {:.1} {:.1} {json}", w * 1e3, e * 1e3);
    }
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let count: usize = option(&args, "--count").and_then(|v| v.parse().ok()).unwrap_or(300);
    let seed: u64 = option(&args, "--seed").and_then(|v| v.parse().ok()).unwrap_or(2026);
    let sizes: Vec<usize> = option(&args, "--check")
        .unwrap_or_else(|| "1000,10000".into())
        .split(',')
        .filter_map(|v| v.parse().ok())
        .filter(|n| *n > 0)
        .collect();
    let catalogue = fillwright::gas::Catalogue::built_in();
    let settings = fillwright::settings::Settings::default().resolve("", "defaults").expect("defaults");
    let only = option(&args, "--only");
    let recipes: Vec<_> =
        panel(seed, count).into_iter().filter(|(k, _)| only.as_deref().is_none_or(|o| o == *k)).collect();
    if option(&args, "--each").is_some() {
        each(&recipes, &catalogue, &settings);
        return;
    }
    if let Some(dir) = option(&args, "--write-library") {
        let n = sizes.first().copied().unwrap_or(1000);
        fillwright::speed::write_library(std::path::Path::new(&dir), n).expect("library written");
        return;
    }
    if let Some(which) = option(&args, "--profile") {
        for _ in 0..10 {
            for (_, r) in &recipes {
                // Each as the first recompute after an edit, as in the tables.
                fillwright::speed::forget_kept_answers();
                match which.as_str() {
                    "estimate" => drop(Computed::estimate(r, &catalogue, &settings)),
                    "plan" | "plan-estimate" => {
                        let mut options = Computed::options(&settings);
                        if which == "plan-estimate" {
                            options.phase_judge = Some(fillwright::thermo::Model::Pr);
                        }
                        if let Ok(order) = r.resolve(&catalogue, "", &r.name) {
                            drop(fillwright::plan::plan(&order, &catalogue, &options));
                        }
                    }
                    _ => drop(Computed::of(r, &catalogue, &settings)),
                }
            }
        }
        return;
    }
    // One recompute first, so that start-up (the catalogue, the thread pool) is not a recipe's.
    let _ = Computed::of(&recipes[0].1, &catalogue, &settings);
    let rows: Vec<Row> = recipes
        .iter()
        .map(|(kind, r)| {
            // Each as the first recompute after an edit of the composition: nothing kept.
            fillwright::speed::forget_kept_answers();
            let (ew, ec, _) = timed(|| Computed::estimate(r, &catalogue, &settings));
            fillwright::speed::forget_kept_answers();
            let (rw, rc, full) = timed(|| Computed::of(r, &catalogue, &settings));
            Row { kind, planned: full.plan.is_ok(), estimate: (ew, ec), reference: (rw, rc) }
        })
        .collect();
    println!("Panel: {} recipes, seed {seed}; median / 99th percentile / maximum per recompute.\n", rows.len());
    println!("| kind | recipes (planned) | estimate, wall | estimate, CPU | reference, wall | reference, CPU |");
    println!("|---|---|---|---|---|---|");
    let kinds: Vec<&str> = PANEL_KINDS.iter().copied().chain(["all"]).collect();
    for kind in kinds {
        let of: Vec<&Row> = rows.iter().filter(|r| kind == "all" || r.kind == kind).collect();
        let pick = |f: &dyn Fn(&Row) -> f64| of.iter().map(|r| f(r)).collect::<Vec<f64>>();
        println!(
            "| {kind} | {} ({}) | {} | {} | {} | {} |",
            of.len(),
            of.iter().filter(|r| r.planned).count(),
            stats(&pick(&|r| r.estimate.0)),
            stats(&pick(&|r| r.estimate.1)),
            stats(&pick(&|r| r.reference.0)),
            stats(&pick(&|r| r.reference.1)),
        );
    }
    plans_by_size(&recipes, &catalogue, &settings);
    processes(&sizes);
}

/// The plan alone (no screening), in-process, by number of components: median wall time
/// of each panel recipe's plan under the reference equations' phases (nothing kept from
/// before), and under Peng–Robinson's (as the screen's estimate plans); beside them, what
/// one pass of the reference equations' phase judgements costs at the least: a
/// stability test of each step's contents at the fill temperature alone, by the reference
/// equations alone (the plan judges each step at the fill temperature and three cooler
/// ones, for the multi-fluid model with unpublished pairs by both usual estimates: at most
/// that many judgements, as a step found liquid is not judged further and the second
/// estimate judges only contents it applies to).
fn plans_by_size(
    recipes: &[(&str, fillwright::recipe::Recipe)],
    catalogue: &fillwright::gas::Catalogue,
    settings: &fillwright::settings::Resolved,
) {
    let options = Computed::options(settings);
    let mut by_size: std::collections::BTreeMap<usize, Vec<[f64; 4]>> = Default::default();
    for (_, r) in recipes {
        let Ok(order) = r.resolve(catalogue, "", &r.name) else { continue };
        fillwright::speed::forget_kept_answers();
        let (w, _, plan) = timed(|| fillwright::plan::plan(&order, catalogue, &options));
        let Ok(plan) = plan else { continue };
        fillwright::speed::forget_kept_answers();
        let estimate =
            fillwright::plan::PlanOptions { phase_judge: Some(fillwright::thermo::Model::Pr), ..options.clone() };
        let (w_estimate, _, _) = timed(|| fillwright::plan::plan(&order, catalogue, &estimate));
        let reference = fillwright::plan::reference_model(&plan.gases, catalogue);
        let Ok(judge) = fillwright::thermo::Fluid::new(catalogue, &plan.gases, reference) else { continue };
        let judges = judge.phase_judges(catalogue, &plan.gases).len();
        fillwright::speed::forget_kept_answers();
        let (pass, _, _) = timed(|| {
            for s in &plan.steps {
                let _ = judge.condensed_tv(plan.fill_temperature_k, order.volume_m3, &s.amounts_after_mol);
            }
        });
        let judgements = (plan.steps.len() * 4 * judges) as f64;
        by_size.entry(r.components.len()).or_default().push([w, w_estimate, pass, judgements]);
    }
    println!("\nPlan alone, median wall time by number of components: with the reference equations'");
    println!("phases, with Peng-Robinson's (as in the screen's estimate), and one pass of the reference");
    println!("equations' stability tests (each step at the fill temperature, one judge):\n");
    println!("| components | plans | median | maximum | with PR's phases | one pass | judgements, at most |");
    println!("|---|---|---|---|---|---|---|");
    for (n, rows) in by_size {
        let column = |k: usize| rows.iter().map(|r| r[k]).collect::<Vec<f64>>();
        println!(
            "| {n} | {} | {} | {} | {} | {} | {:.0} |",
            rows.len(),
            ms(percentile(&column(0), 0.5)),
            ms(percentile(&column(0), 1.0)),
            ms(percentile(&column(1), 0.5)),
            ms(percentile(&column(2), 0.5)),
            percentile(&column(3), 0.5)
        );
    }
}

/// (wall seconds, CPU seconds, peak resident KiB) of one whole process.
#[allow(clippy::zombie_processes)] // reaped by wait4, which also gives its resource usage
fn process(args: &[&str], config: &std::path::Path) -> (f64, f64, i64) {
    let start = Instant::now();
    let child = Command::new(env!("CARGO_BIN_EXE_fillwright"))
        .args(args)
        .env("FILLWRIGHT_CONFIG", config)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("fillwright starts");
    let mut status = 0;
    // SAFETY: an all-zero rusage is a valid value for wait4 to fill; the pid is our child's,
    // reaped here (the Child is then dropped without waiting again).
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    unsafe { libc::wait4(child.id() as i32, &mut status, 0, &mut usage) };
    let cpu = |t: libc::timeval| t.tv_sec as f64 + t.tv_usec as f64 * 1e-6;
    (start.elapsed().as_secs_f64(), cpu(usage.ru_utime) + cpu(usage.ru_stime), usage.ru_maxrss)
}

/// What `plan FILE` computes, in-process: the plan under the settings' defaults and the
/// screening (the process's cost above this is its start-up and its printing).
fn plan_and_screen(text: &str) -> usize {
    use fillwright::plan::{PlanOptions, Resolutions};
    let catalogue = fillwright::gas::Catalogue::built_in();
    let settings = fillwright::settings::Settings::default().resolve("", "defaults").expect("defaults");
    let order = fillwright::recipe::Recipe::load(text, "demo", &catalogue).expect("demo recipe");
    let options = PlanOptions {
        default_model: settings.default_model,
        model: None,
        min_temperature_k: Some(settings.conditions().judged_down_to_k()),
        fill_temperature_k: None,
        order: None,
        resolutions: Resolutions { gauge_pa: settings.gauge_resolution_pa, scale_g: settings.scale_resolution_g },
        skip_following: false,
        screening_only: false,
        stage_steps_only: false,
        phase_judge: None,
    };
    let plan = fillwright::plan::plan(&order, &catalogue, &options).expect("demo plans");
    fillwright::checks::screen(&plan, &order, &catalogue, &settings.conditions()).len()
}

fn processes(sizes: &[usize]) {
    let root = std::env::temp_dir().join(format!("fillwright-panel-{}", std::process::id()));
    let config = root.join("config");
    println!("\nWhole processes (release build, 2 cores):\n");
    println!("| command | wall | CPU | peak memory |");
    println!("|---|---|---|---|");
    let row = |label: String, (w, c, kib): (f64, f64, i64)| {
        println!("| {label} | {} | {} | {:.1} MiB |", ms(w), ms(c), kib as f64 / 1024.0)
    };
    let median_of = |args: &[&str]| {
        let mut runs: Vec<(f64, f64, i64)> = (0..11).map(|_| process(args, &config)).collect();
        runs.sort_by(|a, b| a.0.total_cmp(&b.0));
        runs[5]
    };
    row("`--version` (median of 11)".into(), median_of(&["--version"]));
    for name in ["detector-test-ch4-air", "pipeline-ng-9"] {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join(format!("mixtures/{name}.ron"));
        row(
            format!("`plan mixtures/{name}.ron` (median of 11)"),
            median_of(&["plan", path.to_str().expect("utf-8 path")]),
        );
        let text = std::fs::read_to_string(&path).expect("demo recipe");
        let (w, c, _) = timed(|| plan_and_screen(&text));
        println!("| the same plan and screening in this process, first time | {} | {} | |", ms(w), ms(c));
    }
    for &n in sizes {
        let dir = root.join(format!("library-{n}"));
        fillwright::speed::write_library(&dir, n).expect("library written");
        let written = Instant::now();
        let d = dir.to_str().expect("utf-8 path");
        row(format!("`check DIR --format json`, {n} recipes"), process(&["check", d, "--format", "json"], &config));
        row(format!("`check DIR`, {n} recipes"), process(&["check", d], &config));
        // The files have settled by now (the checks took seconds): the first listing reads
        // every file and writes the listing's index, the second reads the index.
        std::thread::sleep(std::time::Duration::from_millis(3100).saturating_sub(written.elapsed()));
        row(format!("`list --library DIR`, {n} recipes, first time"), process(&["list", "--library", d], &config));
        row(
            format!("`list --library DIR`, {n} recipes, again (its index)"),
            process(&["list", "--library", d], &config),
        );
    }
    let _ = std::fs::remove_dir_all(&root);
}

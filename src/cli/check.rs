//! `fillwright check`: screening before the fill. Exit status 3 when a finding is at `stop`.

use std::path::Path;

use clap::Args;

use super::plan::OrderArgs;
use super::{Common, Failure, Format, Refused};
use crate::checks::{self, Conditions, Severity};
use crate::config;
use crate::gas::Catalogue;
use crate::plan::{self, PlanOptions};
use crate::print::check as report;
use crate::print::check::Screened;
use crate::recipe::{Order, Recipe};
use crate::settings::Resolved;
use crate::thermo::Model;
use crate::units;

#[derive(Debug, Args)]
#[command(after_help = "Give recipes (library names, demo names, .ron files or folders of them), or the order \
                        with --mix, --volume, --pressure and --temp.\n\n\
                        Exit status: 0 when nothing is at stop, 3 when something is, 1 for refused input.\n\n\
                        Examples:\n  \
                        fillwright check flue-gas-span lpg-in-methane\n  \
                        fillwright check ~/.config/fillwright/library --format csv\n  \
                        fillwright check --mix \"CH4=2.2%,O2=20.9%,N2=balance\" --volume 10L \\\n      \
                        --pressure 150bar --temp 15C")]
pub struct CheckArgs {
    /// Recipes: library names, demo recipe names, .ron files, folders of .ron files, or `-`
    /// (standard input).
    #[arg(value_name = "RECIPE", conflicts_with = "mix")]
    pub recipes: Vec<String>,
    #[command(flatten)]
    pub given: OrderArgs,
    /// Lowest storage and transport temperature (default: the setting, else 0C).
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    pub min_temp: Option<String>,
    /// Highest service temperature (default: the setting, else 65C).
    #[arg(long, value_name = "T", allow_hyphen_values = true)]
    pub max_temp: Option<String>,
    /// Recipe library folder.
    #[arg(long, value_name = "DIR")]
    pub library: Option<std::path::PathBuf>,
    #[command(flatten)]
    pub common: Common,
}

/// How far the recipes being screened may run ahead of the last one written: enough to
/// keep every core busy past a slow recipe, few enough that memory stays flat however many
/// recipes a folder holds.
const AHEAD: usize = 64;

/// Screen every recipe named (or the order given), writing each result as it is ready, in
/// the order named: a finding at stop ends with exit status 3, a recipe that could not be
/// screened with 1.
pub fn run(args: &CheckArgs) -> Result<(), Failure> {
    let catalogue = config::load_catalogue().map_err(Refused)?;
    let settings = config::load_settings().map_err(Refused)?;
    let conditions = conditions(args, &settings)?;
    let format = match args.common.format {
        Format::Json => report::Format::Json,
        Format::Csv => report::Format::Csv,
        Format::Text => report::Format::Text,
    };
    let names = names(args)?;
    let mut stream = report::Stream::new(format, &conditions, &settings.shown);
    let mut tally = Tally::default();
    // The report begins once the first recipe is screened: arguments refused (a bad
    // --mix, --working-pressure or --before-fill) leave no half-written report.
    let mut begun = false;
    let work = |name: &String| {
        let mut named = read(args, name, &catalogue, &settings)?;
        apply_ratings(args, &mut named, &catalogue)?;
        Ok::<_, Failure>(screen(&named, args.common.model, &settings, &conditions, &catalogue))
    };
    in_order(&names, AHEAD, work, |s: Screened| {
        if !std::mem::replace(&mut begun, true) {
            out!("{}", stream.begin());
        }
        tally.add(&s);
        out!("{}", stream.item(&s));
    })?;
    out!("{}", stream.end());
    tally.outcome()
}

/// Do `work` on each of `items` on every core and hand each result to `take` in the items'
/// order, as soon as it and all before it are done. This thread hands the items to the
/// thread pool in order, none more than `ahead` past the first not yet taken, so few
/// results wait and memory stays flat in the number of items (and no core idles at the end
/// of a batch, as with batches screened in turn); the pool's threads never wait on this one
/// (a worker blocked on the window could hold a job that the first item waits for). The
/// first error, in order, ends the run after the results before it; the work not yet begun
/// is then skipped. A panic in `work` is raised here.
fn in_order<T: Sync, R: Send, E: Send>(
    items: &[T],
    ahead: usize,
    work: impl Fn(&T) -> Result<R, E> + Sync,
    mut take: impl FnMut(R),
) -> Result<(), E> {
    use std::panic::{catch_unwind, resume_unwind, AssertUnwindSafe};
    use std::sync::atomic::{AtomicBool, Ordering::Relaxed};
    type Done<R, E> = (usize, std::thread::Result<Result<R, E>>);
    let stop = AtomicBool::new(false);
    let (tx, rx) = std::sync::mpsc::channel::<Done<R, E>>();
    let (work, stop_ref) = (&work, &stop);
    rayon::in_place_scope(|scope| {
        let mut handed = 0;
        let hand = |i: usize| {
            let tx = tx.clone();
            scope.spawn(move |_| {
                if !stop_ref.load(Relaxed) {
                    let _ = tx.send((i, catch_unwind(AssertUnwindSafe(|| work(&items[i])))));
                }
            });
        };
        while handed < items.len().min(ahead.max(1)) {
            hand(handed);
            handed += 1;
        }
        // The work not yet begun is skipped once the run ends early, by an error or a panic
        // (which then reaches the caller without waiting for all that was handed out).
        struct SkipRestOnUnwind<'a>(&'a AtomicBool);
        impl Drop for SkipRestOnUnwind<'_> {
            fn drop(&mut self) {
                if std::thread::panicking() {
                    self.0.store(true, Relaxed);
                }
            }
        }
        let _skip = SkipRestOnUnwind(&stop);
        let mut waiting = std::collections::BTreeMap::new();
        let mut next = 0;
        let outcome = (|| {
            while next < items.len() {
                let Ok((i, result)) = rx.recv() else { break };
                waiting.insert(i, result);
                while let Some(result) = waiting.remove(&next) {
                    take(result.unwrap_or_else(|panic| resume_unwind(panic))?);
                    next += 1;
                    if handed < items.len() {
                        hand(handed);
                        handed += 1;
                    }
                }
            }
            Ok(())
        })();
        if outcome.is_err() {
            stop.store(true, Relaxed);
        }
        outcome
    })
}

/// A recipe as named: where it came from, and its order or why it could not be read.
type Named = (String, Result<Order, String>);

/// What is named: the recipes (folders read for their `.ron` files), or the order given
/// with --mix (as its name, read by [`read`]).
fn names(args: &CheckArgs) -> Result<Vec<String>, Failure> {
    if args.given.mix.is_some() {
        return Ok(vec![String::new()]);
    }
    if args.recipes.is_empty() {
        return Err(Failure::Usage("check needs recipes or --mix with --volume and --pressure".into()));
    }
    let mut names = Vec::new();
    for name in &args.recipes {
        names.extend(recipe_files(name)?);
    }
    Ok(names)
}

/// One recipe named (or the order given with --mix); one that cannot be read keeps its
/// error and the others still run.
fn read(args: &CheckArgs, name: &str, catalogue: &Catalogue, settings: &Resolved) -> Result<Named, Failure> {
    if args.given.mix.is_some() {
        let order = args.given.order(args.common.ambient_pa(settings)?, catalogue)?;
        return Ok((order.name.clone(), Ok(order)));
    }
    let loaded = config::recipe_text(name, args.library.as_deref()).and_then(|(text, origin)| {
        Recipe::load(&text, &origin, catalogue).map(|o| (origin, o)).map_err(|e| e.to_string())
    });
    Ok(match loaded {
        Ok((origin, order)) => (origin, Ok(order)),
        Err(e) => (name.to_string(), Err(e)),
    })
}

/// The storage and service temperatures the blend is judged over.
fn conditions(args: &CheckArgs, settings: &Resolved) -> Result<Conditions, Refused> {
    let temp = |t: &Option<String>, what: &str, default: f64| -> Result<f64, Refused> {
        t.as_deref().map_or(Ok(default), |t| units::parse_temperature(t).map_err(|e| Refused(format!("--{what}: {e}"))))
    };
    let conditions = Conditions {
        min_temperature_k: temp(&args.min_temp, "min-temp", settings.min_storage_temperature_k)?,
        max_temperature_k: temp(&args.max_temp, "max-temp", settings.max_service_temperature_k)?,
        margin_k: settings.condensation_margin_k,
    };
    if conditions.min_temperature_k >= conditions.max_temperature_k {
        return Err(Refused(format!(
            "--min-temp {} is not below --max-temp {}: the lowest storage temperature must be below the highest \
             service temperature",
            settings.shown.tf(conditions.min_temperature_k),
            settings.shown.tf(conditions.max_temperature_k)
        )));
    }
    Ok(conditions)
}

/// A folder's `.ron` files (hidden ones left out), in name order; anything else as named.
fn recipe_files(name: &str) -> Result<Vec<String>, Refused> {
    let path = Path::new(name);
    if !std::fs::symlink_metadata(path).is_ok_and(|m| m.is_dir()) {
        return Ok(vec![name.to_string()]);
    }
    let mut files: Vec<String> = std::fs::read_dir(path)
        .map_err(|e| Refused(format!("{name}: {e}")))?
        .flatten()
        .map(|e| e.path())
        .filter(|p| p.extension().and_then(|x| x.to_str()) == Some("ron"))
        .filter(|p| !p.file_name().and_then(|f| f.to_str()).is_some_and(|f| f.starts_with('.')))
        .map(|p| p.display().to_string())
        .collect();
    files.sort();
    Ok(files)
}

/// --working-pressure and --test-pressure check a recipe against another cylinder rating;
/// --before-fill another heel.
fn apply_ratings(args: &CheckArgs, (origin, order): &mut Named, catalogue: &Catalogue) -> Result<(), Failure> {
    if args.given.mix.is_some() {
        return Ok(());
    }
    let Ok(o) = order else { return Ok(()) };
    let (working, test) = args.given.ratings(o.ambient_pa)?;
    if let Some(p) = working {
        o.working_pressure_pa = p;
    }
    if let Some(p) = test {
        o.test_pressure_pa = p;
    }
    args.given.apply_before_fill(o, catalogue)?;
    if o.test_pressure_pa < o.working_pressure_pa {
        *order = Err(format!("{origin}: the test pressure is below the working pressure"));
    }
    Ok(())
}

/// Plan and screen one order.
fn screen(
    (origin, order): &Named,
    model: Option<Model>,
    settings: &Resolved,
    conditions: &Conditions,
    catalogue: &Catalogue,
) -> Screened {
    let options = PlanOptions {
        model,
        default_model: settings.default_model,
        resolutions: plan::Resolutions { gauge_pa: settings.gauge_resolution_pa, scale_g: settings.scale_resolution_g },
        min_temperature_k: Some(conditions.judged_down_to_k()),
        // The report is the screening's: no other model's plan, no premix proposal, no
        // comparison of following each model's readings.
        screening_only: true,
        ..PlanOptions::default()
    };
    let screened = order.as_ref().map_err(Clone::clone).and_then(|order| {
        // A fill above the test pressure has no plan: it is refused, in `plan` alike.
        let p = plan::plan(order, catalogue, &options).map_err(|e| format!("{origin}: {e}"))?;
        Ok((p.model, checks::screen(&p, order, catalogue, conditions)))
    });
    (origin.clone(), screened)
}

/// What the exit status needs of the results written: the worst severity, how many could
/// not be screened, and the error of a lone recipe.
#[derive(Default)]
struct Tally {
    worst: Option<Severity>,
    count: usize,
    unreadable: usize,
    first_error: Option<String>,
}

impl Tally {
    fn add(&mut self, (_, r): &Screened) {
        self.count += 1;
        match r {
            Ok((_, c)) => self.worst = self.worst.max(Some(checks::worst(c))),
            Err(e) => {
                self.unreadable += 1;
                self.first_error.get_or_insert_with(|| e.clone());
            }
        }
    }

    /// The worst status wins: a finding at stop (3), else a recipe that could not be
    /// screened (1), else 0.
    fn outcome(self) -> Result<(), Failure> {
        if self.worst == Some(Severity::Stop) {
            return Err(Failure::Findings);
        }
        match (self.count, self.first_error) {
            (1, Some(e)) => Err(Refused(e).into()),
            (_, Some(_)) => Err(Refused(format!(
                "{} of {} recipes could not be screened (each is named above with its error)",
                self.unreadable, self.count
            ))
            .into()),
            _ => Ok(()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::atomic::{AtomicUsize, Ordering::Relaxed};

    /// Work that takes longer for some items (so that later ones finish first).
    fn uneven(i: usize) -> usize {
        let spins = if i.is_multiple_of(7) { 20_000 } else { 200 };
        (0..spins).fold(i, |a, k| std::hint::black_box(a ^ k)) ^ (0..spins).fold(0, |a, k| a ^ k)
    }

    #[test]
    fn results_come_in_order_and_none_runs_far_ahead() {
        let items: Vec<usize> = (0..2_000).collect();
        let started = AtomicUsize::new(0);
        let written = AtomicUsize::new(0);
        let mut seen = Vec::new();
        let mut furthest_ahead = 0;
        let outcome: Result<(), String> = in_order(
            &items,
            16,
            |&i| {
                started.fetch_add(1, Relaxed);
                // An item starts only within `ahead` of the first not yet written.
                let ahead = i - written.load(Relaxed).min(i);
                Ok((i, uneven(i), ahead))
            },
            |(i, r, ahead)| {
                assert_eq!(r, i, "each result is its own item's");
                seen.push(i);
                furthest_ahead = furthest_ahead.max(ahead);
                written.store(i + 1, Relaxed);
            },
        );
        assert!(outcome.is_ok());
        assert_eq!(seen, items, "every result once, in the items' order");
        assert_eq!(started.load(Relaxed), items.len());
        assert!(furthest_ahead < 16, "an item began {furthest_ahead} past the first unwritten");
    }

    #[test]
    fn work_that_uses_the_pool_itself_finishes_and_nothing_is_owed_for_no_items() {
        // Each recipe's plan uses the thread pool too (both cores for a step's judgements):
        // work that joins inside the pool, with a narrow window, still comes out whole.
        fn nested(i: usize) -> usize {
            let (a, b) = rayon::join(|| uneven(i), || (0..8).into_par_iter().map(|k| uneven(i + k) - k).sum::<usize>());
            a * 8 + b
        }
        use rayon::prelude::*;
        let items: Vec<usize> = (0..400).collect();
        let mut seen = Vec::new();
        assert!(in_order(&items, 2, |&i| Ok::<_, ()>(nested(i)), |r| seen.push(r)).is_ok());
        assert_eq!(seen, items.iter().map(|&i| 16 * i).collect::<Vec<_>>(), "i·8 + 8·i for each, in order");
        let none: Vec<usize> = Vec::new();
        let mut taken = 0;
        assert!(in_order(&none, 8, |&i| Ok::<_, ()>(i), |_| taken += 1).is_ok());
        assert_eq!(taken, 0);
    }

    #[test]
    fn a_panic_in_the_work_is_raised_in_the_caller() {
        let items: Vec<usize> = (0..500).collect();
        let mut seen = 0;
        let caught = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
            in_order(
                &items,
                8,
                |&i| {
                    assert!(i != 77, "item 77 fails");
                    Ok::<_, ()>(uneven(i))
                },
                |_| seen += 1,
            )
        }));
        assert!(caught.is_err(), "the panic reaches the caller");
        assert_eq!(seen, 77, "the results before it were taken");
    }

    #[test]
    fn the_first_error_in_order_ends_the_run_after_the_results_before_it() {
        let items: Vec<usize> = (0..5_000).collect();
        let started = AtomicUsize::new(0);
        let mut seen = Vec::new();
        let outcome = in_order(
            &items,
            32,
            |&i| {
                started.fetch_add(1, Relaxed);
                if i == 300 || i == 310 {
                    Err(format!("item {i}"))
                } else {
                    Ok(uneven(i))
                }
            },
            |r| seen.push(r),
        );
        assert_eq!(outcome, Err("item 300".to_string()), "the first error in the items' order");
        assert_eq!(seen, (0..300).collect::<Vec<_>>());
        // The rest is skipped: at most `ahead` past the failing item (and those already
        // taken by a core) began.
        assert!(started.load(Relaxed) <= 300 + 32 + rayon::current_num_threads() + 1, "{}", started.load(Relaxed));
    }
}

//! The fill in progress as the library holds it: the composition so far from the fill
//! record's weighings, against the plan, and the rest of the fill re-planned from it. Used
//! by the Fill sheet and by `fillwright plan NAME --record ID` alike.

use std::path::Path;

use crate::gas::Catalogue;
use crate::library::records::{Lookup, OpenedRecord};
use crate::library::Library;
use crate::plan::replan::{self, Replan};
use crate::plan::Plan;
use crate::recipe::Order;
use crate::record::composition::Measurand;

/// Where a fill stands.
#[derive(Debug, Clone)]
pub struct Standing {
    /// Additions weighed (complete).
    pub weighed: usize,
    /// Per plan gas: the amount in the cylinder now, mol.
    pub now_mol: Vec<f64>,
    /// The last scale reading, g.
    pub last_reading_g: Option<f64>,
    /// The rest re-planned, or why not.
    pub replan: Result<Replan, String>,
}

/// Read the record into numbers and re-plan the rest of `plan` from it.
pub fn standing(
    opened: &OpenedRecord,
    plan: &Plan,
    order: &Order,
    library: &Library,
    sources: Option<&Path>,
    catalogue: &Catalogue,
) -> Result<Standing, String> {
    let origin = opened.path.display().to_string();
    let lookup = Lookup { library: Some(library), sources, catalogue, depth: 0 };
    let checked =
        opened.record.check(catalogue, &|r| lookup.resolve(r), &opened.text, &origin).map_err(|e| e.to_string())?;
    let m = Measurand::of(&checked, catalogue, plan.model, Some(plan.volume_m3), &[])?;
    let amounts = m.amounts_mol();
    let weighed = checked.complete.min(plan.steps.len());
    let now_mol: Vec<f64> =
        plan.gases.iter().map(|g| m.gases.iter().position(|h| h == g).map_or(0.0, |i| amounts[i])).collect();
    let replan = replan::replan(plan, order, weighed, &now_mol);
    Ok(Standing { weighed, now_mol, last_reading_g: checked.weighings_g.last().copied(), replan })
}

//! Corrections of recorded entries. A slip at the bench (a reading typed in kg for g, the
//! wrong step's temperature) is mended by replacing or withdrawing the entry with a reason:
//! the record keeps a [`Correction`] saying what it was and why, its revisions keep the
//! entry as it was (the audit trail), and the certificate says a correction was made.

use super::{Correction, Record};
use crate::units;

/// An entry of a record that can be corrected.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Entry {
    /// A scale reading: 0 the empty cylinder, k after addition k.
    Weighing(usize),
    /// The reference cylinder's reading beside weighing k (substitution weighing).
    Reference(usize),
    /// Addition k's (1-based) pressure reading, cylinder temperature or source.
    Pressure(usize),
    Temperature(usize),
    Source(usize),
}

impl Entry {
    /// How the entry is named in the record and on the certificate.
    pub fn name(&self) -> String {
        match self {
            Entry::Weighing(0) => "weighing 0 (empty cylinder)".into(),
            Entry::Weighing(k) => format!("weighing {k}"),
            Entry::Reference(k) => format!("reference reading {k}"),
            Entry::Pressure(k) => format!("addition {k} pressure"),
            Entry::Temperature(k) => format!("addition {k} temperature"),
            Entry::Source(k) => format!("addition {k} source"),
        }
    }
}

/// What the correction prompt accepts, for messages.
pub const SYNTAX: &str = "w N VALUE (scale reading N, 0 the empty cylinder; r N: the reference cylinder's), \
                          p N VALUE (pressure), t N VALUE (temperature), s N SOURCE (N the step); '-' withdraws";

/// Read `w 2 13450.12g`, `p 3 -`, `s 2 @CO-lot-7` into the entry and the new value (None:
/// withdraw).
pub fn parse(text: &str) -> Result<(Entry, Option<String>), String> {
    let mut words = text.split_whitespace();
    let (Some(kind), Some(n)) = (words.next(), words.next()) else {
        return Err(format!("{text:?}: give the entry and its new value: {SYNTAX}"));
    };
    let n: usize = n.parse().map_err(|_| format!("{n:?} is not a step number: {SYNTAX}"))?;
    let value = words.collect::<Vec<_>>().join(" ");
    let value = match value.as_str() {
        "" => return Err(format!("no new value for {kind} {n}: type it, or '-' to withdraw the entry")),
        "-" => None,
        v => Some(v.to_string()),
    };
    let step = |n: usize| if n == 0 { Err("steps count from 1".to_string()) } else { Ok(n) };
    let entry = match kind.to_ascii_lowercase().as_str() {
        "w" | "weighing" => Entry::Weighing(n),
        "r" | "reference" => Entry::Reference(n),
        "p" | "pressure" => Entry::Pressure(step(n)?),
        "t" | "temperature" => Entry::Temperature(step(n)?),
        "s" | "source" => Entry::Source(step(n)?),
        other => return Err(format!("{other:?} is not an entry: {SYNTAX}")),
    };
    Ok((entry, value))
}

/// Apply a correction to `record` (the caller checks the value's own syntax where it
/// needs the catalogue, as for a source). Returns what is kept in `record.corrections`.
pub fn apply(record: &mut Record, entry: Entry, value: Option<&str>, reason: &str, now: &str) -> Result<(), String> {
    let reason = reason.trim();
    if reason.is_empty() {
        return Err("a correction needs its reason (it goes on the record and the certificate)".into());
    }
    let was = match entry {
        Entry::Weighing(k) => correct_weighing(record, k, value)?,
        Entry::Reference(k) => {
            let v = value.ok_or("a reference reading is withdrawn with its weighing (w N -), not alone")?;
            let n = record.reference_weighings.len();
            if k >= n {
                return Err(format!("the record has {n} reference readings, not one beside weighing {k}"));
            }
            units::grams(v).ok_or(format!("{v}: a scale reading is a mass, e.g. 13950.12g"))?;
            std::mem::replace(&mut record.reference_weighings[k], v.to_string())
        }
        Entry::Pressure(k) | Entry::Temperature(k) | Entry::Source(k) => {
            let count = record.additions.len();
            let a = record.additions.get_mut(k - 1).ok_or(format!("the record has {count} additions, not {k}"))?;
            match entry {
                Entry::Pressure(_) => {
                    if let Some(v) = value {
                        units::parse_pressure(v, units::STANDARD_AMBIENT_PA).map_err(|e| format!("{v}: {e}"))?;
                    }
                    replace_optional(&mut a.pressure, value)
                }
                Entry::Temperature(_) => {
                    if let Some(v) = value {
                        units::parse_temperature(v).map_err(|e| format!("{v}: {e}"))?;
                    }
                    replace_optional(&mut a.temperature, value)
                }
                _ => {
                    let v = value.ok_or("a source cannot be withdrawn, only replaced")?;
                    std::mem::replace(&mut a.source, v.to_string())
                }
            }
        }
    };
    if was.is_empty() && value.is_none() {
        return Err(format!("{} has no value to withdraw", entry.name()));
    }
    record.corrections.push(Correction {
        time: now.to_string(),
        entry: entry.name(),
        was,
        now: value.unwrap_or_default().to_string(),
        reason: reason.to_string(),
    });
    Ok(())
}

fn replace_optional(slot: &mut Option<String>, value: Option<&str>) -> String {
    std::mem::replace(slot, value.map(str::to_string)).unwrap_or_default()
}

/// Replace scale reading `k` (it must stay between its neighbours: every addition adds
/// mass), or withdraw the last one (the fill is then no longer finished).
fn correct_weighing(record: &mut Record, k: usize, value: Option<&str>) -> Result<String, String> {
    let n = record.weighings.len();
    if k >= n {
        return Err(format!("the record has {n} scale readings (0 to {}), not {k}", n.saturating_sub(1)));
    }
    let Some(v) = value else {
        if k + 1 != n {
            return Err(format!("only the last scale reading ({}) can be withdrawn; replace this one", n - 1));
        }
        record.finished = None;
        if let Some(a) = k.checked_sub(1).and_then(|i| record.additions.get_mut(i)) {
            a.time = None;
        }
        // What stands beside the weighing goes with it (one air entry for all stays).
        if record.reference_weighings.len() == n {
            record.reference_weighings.pop();
        }
        if record.air.len() == n && n > 1 {
            record.air.pop();
        }
        return Ok(record.weighings.pop().unwrap_or_default());
    };
    let g = units::grams(v).ok_or(format!("{v}: a scale reading is a mass, e.g. 13450.12g"))?;
    let before = k.checked_sub(1).and_then(|i| units::grams(&record.weighings[i]));
    let after = record.weighings.get(k + 1).and_then(|w| units::grams(w));
    if before.is_some_and(|b| g <= b) || after.is_some_and(|a| g >= a) {
        return Err(format!(
            "{v} does not lie between the readings before and after it ({} and {}): every addition adds mass",
            k.checked_sub(1).map_or("none".into(), |i| record.weighings[i].clone()),
            record.weighings.get(k + 1).cloned().unwrap_or_else(|| "none".into())
        ));
    }
    Ok(std::mem::replace(&mut record.weighings[k], v.to_string()))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn record() -> Record {
        let mut r = Record::start("r", 1, "x", "C1", "2026-12-04T09:00:00Z");
        r.weighings = vec!["13412.00g".into(), "13413.00g".into(), "14550.61kg".into()];
        r.additions = vec![
            super::super::Addition { source: "CO".into(), pressure: Some("0.1bar".into()), ..Default::default() },
            super::super::Addition { source: "CO2".into(), ..Default::default() },
        ];
        r
    }

    #[test]
    fn a_unit_slip_is_replaced_with_its_reason_kept() {
        let mut r = record();
        let (e, v) = parse("w 2 14550.61g").unwrap();
        apply(&mut r, e, v.as_deref(), "typed kg for g", "2026-12-04T10:00:00Z").unwrap();
        assert_eq!(r.weighings[2], "14550.61g");
        let c = &r.corrections[0];
        assert_eq!((c.entry.as_str(), c.was.as_str(), c.now.as_str()), ("weighing 2", "14550.61kg", "14550.61g"));
        assert_eq!(c.reason, "typed kg for g");
    }

    #[test]
    fn refused_corrections_change_nothing() {
        let mut r = record();
        let before = r.clone();
        for (text, reason) in [
            ("w 1 13412.00g", "x"),   // not above the reading before it
            ("w 1 -", "x"),           // not the last reading
            ("w 5 1g", "x"),          // no such reading
            ("p 3 10bar", "x"),       // no such addition
            ("t 1 warm", "x"),        // not a temperature
            ("t 2 -", "x"),           // nothing to withdraw
            ("w 2 14550.61g", "   "), // no reason
        ] {
            let (e, v) = parse(text).unwrap();
            assert!(apply(&mut r, e, v.as_deref(), reason, "t").is_err(), "{text}");
        }
        assert_eq!(r, before);
        for bad in ["", "w", "w x 1g", "z 1 1g", "p 0 1bar", "w 1"] {
            assert!(parse(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn withdrawing_a_substitution_weighing_takes_its_reference_and_air_with_it() {
        let mut r = record();
        r.weighings[2] = "14550.61g".into();
        r.reference_weighings = vec!["13950.10g".into(), "13950.11g".into(), "13950.12g".into()];
        let air =
            super::super::AirLine { temperature: "20C".into(), pressure: "1013hPa".into(), humidity: "40%".into() };
        r.air = vec![air.clone(), air.clone(), air];
        apply(&mut r, Entry::Weighing(2), None, "wrong cylinder", "t").unwrap();
        assert_eq!((r.weighings.len(), r.reference_weighings.len(), r.air.len()), (2, 2, 2));
        let (e, v) = parse("r 1 13950.31g").unwrap();
        apply(&mut r, e, v.as_deref(), "misread", "t").unwrap();
        assert_eq!(r.reference_weighings[1], "13950.31g");
        assert!(apply(&mut r, Entry::Reference(1), None, "x", "t").is_err());
    }

    #[test]
    fn withdrawing_the_last_weighing_reopens_the_fill() {
        let mut r = record();
        r.finished = Some("2026-12-04T11:00:00Z".into());
        r.additions[1].time = Some("2026-12-04T11:00:00Z".into());
        apply(&mut r, Entry::Weighing(2), None, "wrong cylinder on the scale", "t").unwrap();
        assert_eq!(r.weighings.len(), 2);
        assert!(r.finished.is_none() && r.additions[1].time.is_none());
        assert_eq!(r.corrections[0].now, "");
    }
}

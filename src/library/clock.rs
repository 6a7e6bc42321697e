//! The time stamp of a save, UTC in RFC 3339 form, without a date-time dependency.

use std::time::{SystemTime, UNIX_EPOCH};

/// Now, e.g. `2026-12-01T22:40:05Z`.
pub fn now_utc() -> String {
    let secs = SystemTime::now().duration_since(UNIX_EPOCH).map_or(0, |d| d.as_secs());
    format_utc(secs as i64)
}

/// Seconds since 1970-01-01T00:00:00Z as RFC 3339.
pub fn format_utc(secs: i64) -> String {
    let days = secs.div_euclid(86_400);
    let rem = secs.rem_euclid(86_400);
    let (y, m, d) = civil_from_days(days);
    format!("{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z", rem / 3600, rem % 3600 / 60, rem % 60)
}

/// Howard Hinnant's `civil_from_days` (proleptic Gregorian calendar).
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let y = yoe + era * 400 + i64::from(m <= 2);
    (y, m, d)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn known_instants() {
        assert_eq!(format_utc(0), "1970-01-01T00:00:00Z");
        // Check values from GNU `date -u -d @SECONDS`.
        assert_eq!(format_utc(951_825_600), "2000-02-29T12:00:00Z");
        assert_eq!(format_utc(1_796_083_200), "2026-12-01T00:00:00Z");
    }
}

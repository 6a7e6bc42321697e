//! The user's settings: a RON file `settings.ron` in the config folder. Every field is
//! optional; what is left out takes the shipped default.

use serde::{Deserialize, Serialize};

use crate::thermo::Model;
use crate::units::{self, STANDARD_AMBIENT_PA};

/// Settings as written in the file.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields, default)]
pub struct Settings {
    pub format: u32,
    /// Unit of pressures in the text outputs and on the screen: bar, psi, MPa or kPa
    /// (JSON is always in bar).
    pub pressure_unit: crate::units::PressureUnit,
    /// Unit of temperatures in the text outputs and on the screen: C, K or F.
    pub temperature_unit: crate::units::TemperatureUnit,
    /// Model used when neither the command nor the recipe names one. None: gerg where
    /// GERG-2008 covers every gas, else multi.
    pub default_model: Option<Model>,
    /// Ambient pressure for gauge readings.
    pub ambient: String,
    /// Smallest pressure step the fill gauge resolves.
    pub gauge_resolution: String,
    /// Smallest mass step the scale resolves.
    pub scale_resolution: String,
    /// Lowest temperature the cylinder will see in storage and transport (screening).
    pub min_storage_temperature: String,
    /// Highest service temperature (screening of the pressure rating).
    pub max_service_temperature: String,
    /// Safety margin on the condensation judgement, in kelvin ("6K"): liquid is assumed
    /// wherever the Peng–Robinson dew point plus this margin reaches the temperature.
    pub condensation_margin: String,
    /// Commit each library save when the library folder is a git work tree.
    pub git_commit_on_save: bool,
    /// On the certificate, combine the uncertainty of a consistent verification by analysis
    /// with the gravimetric one (u² = u_prep² + u_ver²); false keeps the gravimetric
    /// uncertainty alone, the verification shown beside it.
    pub combine_verification_uncertainty: bool,
    /// The certificate number: `{record}` and `{year}` are replaced (e.g. "FW-{year}-{record}").
    pub certificate_number: String,
    /// Months a certificate is valid for; none: by the blend's components (6 months with a
    /// reactive gas, 12 with a ppm-level CO or hydrocarbon, else 24; common practice).
    pub shelf_life_months: Option<u32>,
    /// A weighing whose addition is more than this factor above or below the live plan's
    /// (a unit slip: kg for g) asks for confirmation before it is recorded.
    pub weighing_check_factor: f64,
    /// Whether the bench records the air (temperature, pressure, humidity) for the buoyancy
    /// correction: `None`, `Once` (with the empty cylinder) or `EachWeighing`.
    pub air_conditions: AirConditions,
}

/// When the Fill sheet asks for the air conditions.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
pub enum AirConditions {
    #[default]
    None,
    Once,
    EachWeighing,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            format: 1,
            pressure_unit: crate::units::PressureUnit::Bar,
            temperature_unit: crate::units::TemperatureUnit::C,
            default_model: None,
            ambient: "1.01325bar".into(),
            // Common practice, no source: a digital 0-250 bar transducer and a cylinder balance.
            gauge_resolution: "0.1bar".into(),
            scale_resolution: "0.1g".into(),
            min_storage_temperature: "0C".into(),
            // The temperature transport rules use for the rating check (from memory).
            max_service_temperature: "65C".into(),
            // The reference equations' own uncertainty in dew temperatures (see
            // DEFAULT_CONDENSATION_MARGIN); blends with a gas on Peng–Robinson's form get
            // more (checks::CUBIC_FORM_MARGIN_K).
            condensation_margin: DEFAULT_CONDENSATION_MARGIN.into(),
            git_commit_on_save: false,
            combine_verification_uncertainty: false,
            certificate_number: "{year}-{record}".into(),
            shelf_life_months: None,
            // Common practice, no source: twice or half the planned mass is no fill error
            // a careful blender makes; a unit slip is a factor of 1000.
            weighing_check_factor: 2.0,
            air_conditions: AirConditions::None,
        }
    }
}

/// The condensation margin when the settings give none.
/// The margin on the condensation judgement: GERG-2008's stated uncertainty in the
/// hydrocarbon dew-point temperatures of natural gases, 1 to 2 K (Kunz and Wagner, J. Chem.
/// Eng. Data 57 (2012) 3032; from memory), rounded up to the larger. The envelope is the
/// reference equations' own (GERG-2008, or each gas's reference equation in the multi-fluid
/// model; they agree with CoolProp's to 1e-6 K on the fixture of tests/phases.rs).
pub const DEFAULT_CONDENSATION_MARGIN: &str = "2K";

/// A temperature difference in kelvin, "6K" (0 to 30 K).
pub fn parse_margin(text: &str) -> Result<f64, String> {
    let t = text.trim();
    let number = t.strip_suffix('K').ok_or("a margin is a temperature difference in kelvin, e.g. 6K")?;
    let k: f64 = number.trim().parse().map_err(|_| "not a number of kelvin, e.g. 6K".to_string())?;
    if !(0.0..=30.0).contains(&k) {
        return Err("the margin must be from 0K to 30K".into());
    }
    Ok(k)
}

/// A settings file that could not be used.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{origin}:{line}:{column}: {message}")]
pub struct SettingsError {
    pub origin: String,
    pub line: usize,
    pub column: usize,
    pub message: String,
}

/// Settings read into numbers.
#[derive(Debug, Clone, PartialEq)]
pub struct Resolved {
    pub shown: crate::units::Shown,
    pub default_model: Option<Model>,
    pub ambient_pa: f64,
    pub gauge_resolution_pa: f64,
    pub scale_resolution_g: f64,
    pub min_storage_temperature_k: f64,
    pub max_service_temperature_k: f64,
    /// K.
    pub condensation_margin_k: f64,
    pub git_commit_on_save: bool,
    pub combine_verification_uncertainty: bool,
    pub certificate_number: String,
    pub shelf_life_months: Option<u32>,
    pub weighing_check_factor: f64,
    pub air_conditions: AirConditions,
}

impl Resolved {
    /// The screening conditions these settings give.
    pub fn conditions(&self) -> crate::checks::Conditions {
        crate::checks::Conditions {
            min_temperature_k: self.min_storage_temperature_k,
            max_temperature_k: self.max_service_temperature_k,
            margin_k: self.condensation_margin_k,
        }
    }
}

impl Settings {
    /// Parse a settings file's text.
    pub fn parse(text: &str, origin: &str) -> Result<Settings, SettingsError> {
        crate::ron_format::options().from_str(text).map_err(|e| SettingsError {
            origin: origin.into(),
            line: e.position.line,
            column: e.position.col,
            message: e.code.to_string(),
        })
    }

    /// Read the quantities, naming the field of any that is wrong.
    pub fn resolve(&self, text: &str, origin: &str) -> Result<Resolved, SettingsError> {
        let err = |field: &str, message: String| {
            let (line, column) = crate::ron_format::locate(text, field);
            SettingsError { origin: origin.into(), line, column, message: format!("{field}: {message}") }
        };
        let ambient_pa =
            units::parse_pressure(&self.ambient, STANDARD_AMBIENT_PA).map_err(|e| err("ambient", e.to_string()))?;
        let gauge_resolution_pa =
            units::parse_pressure(&self.gauge_resolution, 0.0).map_err(|e| err("gauge_resolution", e.to_string()))?;
        let scale_resolution_g =
            units::parse_mass(&self.scale_resolution).map_err(|e| err("scale_resolution", e.to_string()))?;
        let min_storage_temperature_k = units::parse_temperature(&self.min_storage_temperature)
            .map_err(|e| err("min_storage_temperature", e.to_string()))?;
        let max_service_temperature_k = units::parse_temperature(&self.max_service_temperature)
            .map_err(|e| err("max_service_temperature", e.to_string()))?;
        if min_storage_temperature_k >= max_service_temperature_k {
            return Err(err(
                "min_storage_temperature",
                format!(
                    "{:?} is not below max_service_temperature {:?}; the storage range must run from low to high",
                    self.min_storage_temperature, self.max_service_temperature
                ),
            ));
        }
        let condensation_margin_k = parse_margin(&self.condensation_margin)
            .map_err(|why| err("condensation_margin", format!("{:?}: {why}", self.condensation_margin)))?;
        if !(self.weighing_check_factor > 1.0 && self.weighing_check_factor <= 1000.0) {
            return Err(err(
                "weighing_check_factor",
                format!("{} is not a factor from above 1 to 1000 (e.g. 2.0)", self.weighing_check_factor),
            ));
        }
        Ok(Resolved {
            shown: crate::units::Shown { pressure: self.pressure_unit, temperature: self.temperature_unit },
            default_model: self.default_model,
            ambient_pa,
            gauge_resolution_pa,
            scale_resolution_g,
            min_storage_temperature_k,
            max_service_temperature_k,
            condensation_margin_k,
            git_commit_on_save: self.git_commit_on_save,
            combine_verification_uncertainty: self.combine_verification_uncertainty,
            certificate_number: self.certificate_number.clone(),
            shelf_life_months: self.shelf_life_months,
            weighing_check_factor: self.weighing_check_factor,
            air_conditions: self.air_conditions,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_inverted_temperature_range_is_refused_at_its_place() {
        let text = "(\n  min_storage_temperature: \"80C\",\n  max_service_temperature: \"0C\",\n)";
        let s = Settings::parse(text, "settings.ron").unwrap();
        let e = s.resolve(text, "settings.ron").unwrap_err();
        assert_eq!((e.line, e.column), (2, 3));
        assert!(e.message.contains("not below max_service_temperature"), "{}", e.message);
    }

    #[test]
    fn defaults_resolve() {
        let r = Settings::default().resolve("", "defaults").unwrap();
        assert_eq!(r.ambient_pa, STANDARD_AMBIENT_PA);
        assert_eq!(r.gauge_resolution_pa, 0.1e5);
        assert_eq!(r.default_model, None);
        assert!((r.max_service_temperature_k - 338.15).abs() < 1e-12);
    }

    #[test]
    fn partial_files_keep_the_other_defaults() {
        let s = Settings::parse("(default_model: srk, gauge_resolution: \"0.5bar\")", "s.ron").unwrap();
        assert_eq!(s.default_model, Some(Model::Srk));
        let r = s.resolve("", "s.ron").unwrap();
        assert_eq!(r.gauge_resolution_pa, 0.5e5);
        assert_eq!(r.scale_resolution_g, 0.1);
    }

    #[test]
    fn units_are_read() {
        let s = Settings::parse("(pressure_unit: psi, temperature_unit: F)", "s.ron").unwrap();
        let r = s.resolve("", "s.ron").unwrap();
        assert_eq!(r.shown.pu(), "psi");
        assert_eq!(r.shown.tu(), "°F");
        assert!(Settings::parse("(pressure_unit: furlongs)", "s.ron").is_err());
    }

    #[test]
    fn errors_are_placed() {
        let text = "(\n  ambient: \"1.0\",\n)";
        let s = Settings::parse(text, "s.ron").unwrap();
        let e = s.resolve(text, "s.ron").unwrap_err();
        assert_eq!((e.line, e.column), (2, 3));
        assert!(e.message.contains("has no unit"));
        let e = Settings::parse("(colour: true)", "s.ron").unwrap_err();
        assert!(e.message.contains("colour"), "{e}");
    }
}

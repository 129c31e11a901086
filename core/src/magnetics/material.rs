//! Generic MnZn power-ferrite classes: saturation, permeability and Steinmetz loss parameters.

use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::validate::{number_within, positive, positive_number};
use crate::units::{si, Frequency, MagneticFluxDensity, ThermodynamicTemperature};

/// Steinmetz parameters for one frequency band: Pv = k·f^α·B̂^β (Pv in W/m³, f in Hz,
/// B̂ in T) at the reference temperature, scaled by ct(T) = ct2·T² − ct1·T + ct0 (T in °C,
/// ct = 1 at the temperature where the parameters were fitted).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SteinmetzBand {
    /// Lowest frequency of the band.
    pub frequency_low: Frequency,
    /// Highest frequency of the band.
    pub frequency_high: Frequency,
    /// Coefficient k (W/m³ with f in Hz and B̂ in T).
    pub k: f64,
    /// Frequency exponent α.
    pub alpha: f64,
    /// Flux-density exponent β.
    pub beta: f64,
}

/// A ferrite material class. Every value is typical, recalled from memory for the class (no
/// particular maker's grade); edit them to your material's data.
#[derive(Clone, Debug, PartialEq)]
pub struct FerriteMaterial {
    /// Class name (snake_case, generic).
    pub name: String,
    /// Initial relative permeability µi at 25 °C.
    pub initial_permeability: f64,
    /// Relative amplitude permeability used for the ungapped core reluctance in a gapped
    /// design (lower than µi at working flux and temperature).
    pub working_permeability: f64,
    /// Saturation flux density at 25 °C.
    pub saturation_25c: MagneticFluxDensity,
    /// Saturation flux density at 100 °C.
    pub saturation_100c: MagneticFluxDensity,
    /// Steinmetz bands, in ascending frequency.
    pub bands: Vec<SteinmetzBand>,
    /// Temperature polynomial of the loss: ct(T) = ct2·T² − ct1·T + ct0, T in °C.
    pub temperature_coefficients: [f64; 3],
}

fn band(lo: f64, hi: f64, k: f64, alpha: f64, beta: f64) -> SteinmetzBand {
    SteinmetzBand {
        frequency_low: si(lo),
        frequency_high: si(hi),
        k,
        alpha,
        beta,
    }
}

/// The built-in material classes: typical values recalled from memory, not any maker's
/// grade. Loss parameters fitted at 100 °C (ct = 1 there).
pub fn ferrite_materials() -> Vec<FerriteMaterial> {
    // ct(T) = 1 at 100 °C with a minimum near 90 °C: ct2 = 1e-4, ct1 = 0.018, ct0 = 1.8.
    let ct = [1.8, 0.018, 1.0e-4];
    vec![
        FerriteMaterial {
            name: "mnzn_power_100khz".into(),
            initial_permeability: 2300.0,
            working_permeability: 2000.0,
            saturation_25c: si(0.49),
            saturation_100c: si(0.39),
            bands: vec![
                band(10e3, 100e3, 4.85, 1.35, 2.65),
                band(100e3, 300e3, 0.71, 1.52, 2.65),
            ],
            temperature_coefficients: ct,
        },
        FerriteMaterial {
            name: "mnzn_power_300khz".into(),
            initial_permeability: 1800.0,
            working_permeability: 1600.0,
            saturation_25c: si(0.47),
            saturation_100c: si(0.38),
            bands: vec![
                band(10e3, 100e3, 3.2, 1.35, 2.6),
                band(100e3, 500e3, 0.25, 1.57, 2.6),
            ],
            temperature_coefficients: ct,
        },
        FerriteMaterial {
            name: "mnzn_high_saturation".into(),
            initial_permeability: 2400.0,
            working_permeability: 2100.0,
            saturation_25c: si(0.53),
            saturation_100c: si(0.43),
            bands: vec![
                band(10e3, 100e3, 6.0, 1.35, 2.7),
                band(100e3, 300e3, 0.85, 1.52, 2.7),
            ],
            temperature_coefficients: ct,
        },
    ]
}

/// A built-in material class by name.
pub fn ferrite_material(name: &str) -> Result<FerriteMaterial> {
    let all = ferrite_materials();
    let names: Vec<String> = all.iter().map(|m| m.name.clone()).collect();
    all.into_iter().find(|m| m.name == name).ok_or_else(|| {
        let n: Vec<&str> = names.iter().map(|s| s.as_str()).collect();
        Error::unknown(format!(
            "unknown ferrite material class `{name}`{}; known: {}",
            crate::script::suggest::did_you_mean(name, &n),
            n.join(", ")
        ))
    })
}

impl FerriteMaterial {
    /// Checks every parameter (positive, finite, bands ordered, Bsat sensible).
    pub fn validate(&self) -> Result<()> {
        positive_number("initial_permeability", self.initial_permeability)?;
        positive_number("working_permeability", self.working_permeability)?;
        positive("saturation_25c", self.saturation_25c)?;
        positive("saturation_100c", self.saturation_100c)?;
        if self.bands.is_empty() {
            return Err(Error::invalid(format!(
                "material `{}` has no Steinmetz band",
                self.name
            )));
        }
        for b in &self.bands {
            positive("frequency_low", b.frequency_low)?;
            positive("frequency_high", b.frequency_high)?;
            positive_number("k", b.k)?;
            number_within("alpha", b.alpha, 1.0, 3.0)?;
            number_within("beta", b.beta, 1.5, 3.5)?;
        }
        for c in self.temperature_coefficients {
            if !c.is_finite() {
                return Err(Error::invalid("temperature coefficients must be finite"));
            }
        }
        Ok(())
    }

    /// The Steinmetz band covering a frequency; outside every band is an error (no
    /// extrapolation).
    pub fn band_at(&self, frequency: Frequency) -> Result<SteinmetzBand> {
        let f = positive("frequency", frequency)?.value;
        self.bands
            .iter()
            .find(|b| f >= b.frequency_low.value && f <= b.frequency_high.value)
            .copied()
            .ok_or_else(|| {
                Error::out_of_range(format!(
                    "`frequency` = {} is outside the Steinmetz bands of material `{}` ({} … {})",
                    crate::units::Quantity::from_typed(frequency),
                    self.name,
                    crate::units::Quantity::from_typed(self.bands[0].frequency_low),
                    crate::units::Quantity::from_typed(
                        self.bands[self.bands.len() - 1].frequency_high
                    )
                ))
            })
    }

    /// Loss temperature factor ct(T) = ct2·T² − ct1·T + ct0 (T in °C), valid 20 … 140 °C.
    pub fn temperature_factor(&self, temperature: ThermodynamicTemperature) -> Result<f64> {
        let t = temperature.value - crate::units::CELSIUS_OFFSET;
        let t = number_within("core temperature in °C", t, 20.0, 140.0)?;
        let [c0, c1, c2] = self.temperature_coefficients;
        let ct = c2 * t * t - c1 * t + c0;
        positive_number("loss temperature factor ct(T)", ct)
    }

    /// Saturation flux density at a temperature: linear between the 25 °C and 100 °C values,
    /// valid from 25 °C to 120 °C (the line continued by 20 K, which ferrite data support;
    /// above 120 °C is an error).
    pub fn saturation_at(
        &self,
        temperature: ThermodynamicTemperature,
    ) -> Result<MagneticFluxDensity> {
        let t = temperature.value - crate::units::CELSIUS_OFFSET;
        let t = number_within("core temperature in °C", t, 25.0, 120.0)?;
        let b25 = self.saturation_25c.value;
        let b100 = self.saturation_100c.value;
        Ok(si(b25 + (b100 - b25) * (t - 25.0) / 75.0))
    }
}

crate::serialize_as_record!(FerriteMaterial);

impl Record for FerriteMaterial {
    fn fields(&self) -> Vec<Field> {
        let mut v = vec![
            Field::new("name", self.name.as_str()),
            Field::new("initial_permeability", self.initial_permeability),
            Field::new("working_permeability", self.working_permeability),
            Field::quantity("saturation_25c", self.saturation_25c),
            Field::quantity("saturation_100c", self.saturation_100c),
        ];
        for (i, b) in self.bands.iter().enumerate() {
            v.push(Field::quantity(
                format!("band{}_frequency_low", i + 1),
                b.frequency_low,
            ));
            v.push(Field::quantity(
                format!("band{}_frequency_high", i + 1),
                b.frequency_high,
            ));
            v.push(Field::new(format!("band{}_k", i + 1), b.k));
            v.push(Field::new(format!("band{}_alpha", i + 1), b.alpha));
            v.push(Field::new(format!("band{}_beta", i + 1), b.beta));
        }
        v.push(Field::new("ct0", self.temperature_coefficients[0]));
        v.push(Field::new("ct1", self.temperature_coefficients[1]));
        v.push(Field::new("ct2", self.temperature_coefficients[2]));
        v
    }
}

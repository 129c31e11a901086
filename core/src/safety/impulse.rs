//! Rated impulse voltage of mains-connected equipment (IEC 60664-1:2020 Table F.1) and the
//! altitude correction of clearances (Table A.2).

use super::classes::OvervoltageCategory;
use super::tables::{ALTITUDE, ALTITUDE_SOURCE, RATED_IMPULSE, RATED_IMPULSE_SOURCE};
use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::validate::positive;
use crate::units::{format_number, si, ElectricPotential, Length, Quantity};

/// A rated impulse voltage with the table row that set it.
#[derive(Clone, Debug, PartialEq)]
pub struct RatedImpulse {
    /// Rated impulse voltage (1.2/50 µs), peak.
    pub impulse_voltage_peak: ElectricPotential,
    /// The row used: nominal line-to-neutral voltage up to and including, and the category.
    pub table_row: String,
    /// Standard, edition, table and provenance.
    pub source: String,
}

/// Rated impulse voltage for equipment energised directly from the mains.
///
/// Rule: the row is the first whose line-to-neutral voltage is at or above the nominal
/// line-to-neutral mains voltage (rows step up, no interpolation); the column is the
/// overvoltage category. Valid for 0 < V ≤ 1000 V RMS; above is an error.
/// Reference: IEC 60664-1:2020 Table F.1 (value recalled from memory); IEC 62368-1:2018
/// Table 12 gives the same mains transient voltages (value recalled from memory).
pub fn rated_impulse_voltage(
    mains_voltage: ElectricPotential,
    category: OvervoltageCategory,
) -> Result<RatedImpulse> {
    let v = positive("mains_voltage", mains_voltage)?.value;
    let (row, values) = RATED_IMPULSE
        .iter()
        .find(|(up_to, _)| v <= *up_to * (1.0 + 1e-12))
        .ok_or_else(|| {
            Error::out_of_range(format!(
                "`mains_voltage` = {} (line to neutral, RMS) is above the last row (1000 V) of {}",
                Quantity::from_typed(mains_voltage),
                RATED_IMPULSE_SOURCE.cite()
            ))
        })?;
    Ok(RatedImpulse {
        impulse_voltage_peak: si(values[category.index()]),
        table_row: format!(
            "line to neutral up to {} V, overvoltage category {}",
            format_number(*row),
            category.as_str()
        ),
        source: RATED_IMPULSE_SOURCE.cite(),
    })
}

crate::serialize_as_record!(RatedImpulse);

impl Record for RatedImpulse {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("impulse_voltage_peak", self.impulse_voltage_peak),
            Field::new("table_row", self.table_row.as_str()),
            Field::new("source", self.source.as_str()),
        ]
    }
}

/// The altitude multiplication factor for clearances.
#[derive(Clone, Debug, PartialEq)]
pub struct AltitudeCorrection {
    /// The altitude asked for.
    pub altitude: Length,
    /// The multiplication factor for clearances (1 up to 2000 m).
    pub factor: f64,
    /// The row(s) used, and whether the factor was interpolated.
    pub table_row: String,
    /// Standard, edition, table and provenance.
    pub source: String,
}

/// Multiplication factor for clearances at an altitude.
///
/// Rule: factor 1.00 from sea level up to 2000 m; between the table's rows the factor is
/// interpolated linearly (as IEC 62368-1:2018 permits for its altitude table; value recalled
/// from memory) and the result says so. Valid for 0 … 10 000 m; below sea level or above the
/// last row is an error, never extrapolated.
/// Reference: IEC 60664-1:2020 Table A.2 (value recalled from memory).
pub fn altitude_correction(altitude: Length) -> Result<AltitudeCorrection> {
    let h = altitude.value;
    let last = ALTITUDE[ALTITUDE.len() - 1].0;
    if !h.is_finite() || h < 0.0 || h > last {
        return Err(Error::out_of_range(format!(
            "`altitude` = {} is outside 0 m … {} m (sea level to the last row of {})",
            Quantity::from_typed(altitude),
            format_number(last),
            ALTITUDE_SOURCE.cite()
        )));
    }
    let (factor, row) = if h <= 2000.0 {
        (1.0, "up to 2000 m".to_string())
    } else {
        let i = ALTITUDE
            .iter()
            .position(|r| r.0 >= h)
            .expect("range checked above");
        let (h1, _, f1) = ALTITUDE[i];
        if (h1 - h).abs() < 1e-9 {
            (f1, format!("{} m", format_number(h1)))
        } else {
            let (h0, _, f0) = ALTITUDE[i - 1];
            (
                f0 + (f1 - f0) * (h - h0) / (h1 - h0),
                format!(
                    "interpolated linearly between {} m and {} m",
                    format_number(h0),
                    format_number(h1)
                ),
            )
        }
    };
    Ok(AltitudeCorrection {
        altitude,
        factor,
        table_row: row,
        source: ALTITUDE_SOURCE.cite(),
    })
}

crate::serialize_as_record!(AltitudeCorrection);

impl Record for AltitudeCorrection {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("altitude", self.altitude),
            Field::new("factor", self.factor),
            Field::new("table_row", self.table_row.as_str()),
            Field::new("source", self.source.as_str()),
        ]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rows_step_up() {
        // IEC 60664-1:2020 Table F.1: 230 V falls in the 300 V row (value recalled from memory)
        let r = rated_impulse_voltage(si(230.0), OvervoltageCategory::II).unwrap();
        assert_eq!(r.impulse_voltage_peak.value, 2500.0);
        let r = rated_impulse_voltage(si(120.0), OvervoltageCategory::II).unwrap();
        assert_eq!(r.impulse_voltage_peak.value, 1500.0);
        assert!(rated_impulse_voltage(si(1001.0), OvervoltageCategory::II).is_err());
        assert!(rated_impulse_voltage(si(-1.0), OvervoltageCategory::II).is_err());
    }

    #[test]
    fn altitude_interpolates_and_refuses() {
        // IEC 60664-1:2020 Table A.2 (value recalled from memory)
        assert_eq!(altitude_correction(si(1000.0)).unwrap().factor, 1.0);
        assert_eq!(altitude_correction(si(3000.0)).unwrap().factor, 1.14);
        // linear interpolation of the same table, hand calculation: 1.14 + 0.15/2
        assert!((altitude_correction(si(3500.0)).unwrap().factor - 1.215).abs() < 1e-12);
        assert!(altitude_correction(si(-1.0)).is_err());
        assert!(altitude_correction(si(10001.0)).is_err());
    }
}

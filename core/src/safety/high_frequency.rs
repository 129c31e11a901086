//! Clearance and creepage for working voltages above 30 kHz (IEC 62368-1:2018 5.4.2.2 and
//! 5.4.3, from IEC 60664-4:2005): the transformer barrier of a flyback switching at 65 kHz
//! carries such a voltage.

use super::classes::{InsulationGrade, PollutionDegree};
use super::clearance::{finish_clearance, Clearance, ClearanceLookup};
use super::creepage::Creepage;
use super::impulse::altitude_correction;
use super::tables::{
    TableSource, HIGH_FREQUENCY_CLEARANCE, HIGH_FREQUENCY_CLEARANCE_SOURCE,
    HIGH_FREQUENCY_CREEPAGE, HIGH_FREQUENCY_CREEPAGE_POLLUTION_FACTOR,
    HIGH_FREQUENCY_CREEPAGE_SOURCE, HIGH_FREQUENCY_CREEPAGE_UP_TO_HZ, HIGH_FREQUENCY_LIMIT_HZ,
    HIGH_FREQUENCY_UP_TO_HZ,
};
use crate::error::{Error, Result};
use crate::units::validate::non_negative;
use crate::units::{format_number, si, ElectricPotential, Frequency, Length, Quantity};

/// A working voltage above 30 kHz and where it stands.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HighFrequencySpec {
    /// Peak working voltage across the path.
    pub working_voltage_peak: ElectricPotential,
    /// Frequency of the working voltage (the switching frequency for a transformer barrier).
    pub frequency: Frequency,
    /// Pollution degree at the path.
    pub pollution_degree: PollutionDegree,
    /// Grade of insulation.
    pub grade: InsulationGrade,
    /// Altitude of installation (0 … 10 000 m; clearance only).
    pub altitude: Length,
}

/// Checks the frequency against the range of a high-frequency table.
fn check_frequency(f: Frequency, up_to_hz: f64, what: &str, source: &TableSource) -> Result<()> {
    let hz = non_negative("frequency", f)?.value;
    if hz <= HIGH_FREQUENCY_LIMIT_HZ || hz > up_to_hz * (1.0 + 1e-12) {
        return Err(Error::out_of_range(format!(
            "`frequency` = {}: the {what} table holds above {} up to {} ({}); at 30 kHz and below use the low-frequency rules",
            Quantity::from_typed(f),
            Quantity::from_typed(si::<Frequency>(HIGH_FREQUENCY_LIMIT_HZ)),
            Quantity::from_typed(si::<Frequency>(up_to_hz)),
            source.cite()
        )));
    }
    Ok(())
}

/// First row at or above `kv` of a (kV, mm) table, or an out-of-range error naming the table.
fn step_up(
    table: &[(f64, f64)],
    kv: f64,
    peak: ElectricPotential,
    source: &TableSource,
) -> Result<(f64, f64)> {
    table
        .iter()
        .copied()
        .find(|r| kv <= r.0 * (1.0 + 1e-9))
        .ok_or_else(|| {
            Error::out_of_range(format!(
                "`working_voltage_peak` = {} is above the last row ({} kV) of {}",
                Quantity::from_typed(peak),
                format_number(table[table.len() - 1].0),
                source.cite()
            ))
        })
}

/// Factor of reinforced and double insulation over basic for the high-frequency tables.
fn grade_factor(grade: InsulationGrade) -> (f64, String) {
    if grade.is_double_strength() {
        (2.0, format!("{grade}: twice the basic value"))
    } else {
        (
            1.0,
            format!("{grade}: the table value for basic insulation"),
        )
    }
}

/// Required clearance for a working voltage above 30 kHz.
///
/// Formula: d = max(d_table(Û), d_min(PD)) × g × k_alt, where d_table is the first row of the
/// high-frequency clearance table at or above the peak working voltage Û (no interpolation),
/// g = 2 for reinforced and double insulation (1 otherwise), d_min the pollution-degree minimum
/// of Table F.2 (applied as an assumption on the safe side) and k_alt the altitude factor of
/// IEC 60664-1:2020 Table A.2.
/// Assumptions: inhomogeneous field (on the safe side for a homogeneous one); the working
/// voltage's fundamental lies above 30 kHz. Valid for 0 ≤ Û ≤ 1.0 kV and
/// 30 kHz < f ≤ 10 MHz; outside is an error. This value is one of the clearances a barrier
/// needs: [`super::barrier_requirements`] takes the largest of it, the transient clearance and
/// the steady-state clearance.
/// Reference: IEC 62368-1:2018 5.4.2.2 and Table 11, from IEC 60664-4:2005 Table 1 (values
/// recalled from memory; where recollections differed the larger value was typed).
pub fn high_frequency_clearance(spec: &HighFrequencySpec) -> Result<Clearance> {
    let peak = non_negative("working_voltage_peak", spec.working_voltage_peak)?;
    check_frequency(
        spec.frequency,
        HIGH_FREQUENCY_UP_TO_HZ,
        "high-frequency clearance",
        &HIGH_FREQUENCY_CLEARANCE_SOURCE,
    )?;
    let alt = altitude_correction(spec.altitude)?;
    let (row, table_mm) = step_up(
        &HIGH_FREQUENCY_CLEARANCE,
        peak.value / 1000.0,
        peak,
        &HIGH_FREQUENCY_CLEARANCE_SOURCE,
    )?;
    let (g, rule) = grade_factor(spec.grade);
    Ok(finish_clearance(
        ClearanceLookup {
            table_mm,
            floor: Some(spec.pollution_degree),
            multiplier: g,
            withstand_voltage_peak: peak,
            rule,
            table_row: format!(
                "{} kV peak row, inhomogeneous field, {}",
                format_number(row),
                Quantity::from_typed(spec.frequency)
            ),
            source: HIGH_FREQUENCY_CLEARANCE_SOURCE.cite(),
        },
        &alt,
    ))
}

/// Required creepage for a working voltage above 30 kHz.
///
/// Formula: c = c_table(Û) × p(PD) × g, where c_table is the first row of the 30–100 kHz
/// creepage column at or above the peak working voltage Û (stepping up, no interpolation: on
/// the safe side), p = 1, 1.2, 1.4 for pollution degree 1, 2, 3 and g = 2 for reinforced and
/// double insulation. The value does not depend on the material group. The creepage a barrier
/// needs is the largest of this, the low-frequency creepage at the RMS working voltage and the
/// clearance ([`super::barrier_requirements`]).
/// Valid for 0 ≤ Û ≤ 1.0 kV and 30 kHz < f ≤ 100 kHz; the columns for higher frequencies are
/// not in gapwise's data, so above 100 kHz is an error.
/// Reference: IEC 62368-1:2018 5.4.3 and Table 18, from IEC 60664-4:2005 Table 2 (values and
/// pollution factors recalled from memory).
pub fn high_frequency_creepage(spec: &HighFrequencySpec) -> Result<Creepage> {
    let peak = non_negative("working_voltage_peak", spec.working_voltage_peak)?;
    check_frequency(
        spec.frequency,
        HIGH_FREQUENCY_CREEPAGE_UP_TO_HZ,
        "high-frequency creepage",
        &HIGH_FREQUENCY_CREEPAGE_SOURCE,
    )?;
    let (row, table_mm) = step_up(
        &HIGH_FREQUENCY_CREEPAGE,
        peak.value / 1000.0,
        peak,
        &HIGH_FREQUENCY_CREEPAGE_SOURCE,
    )?;
    let p = HIGH_FREQUENCY_CREEPAGE_POLLUTION_FACTOR[spec.pollution_degree.index()];
    let (g, mut rule) = grade_factor(spec.grade);
    rule.push_str(&format!(
        "; × {} for {}; table steps up to the next row",
        format_number(p),
        spec.pollution_degree
    ));
    let basic = table_mm * p * 1e-3;
    Ok(Creepage {
        creepage: si(basic * g),
        basic_creepage: si(basic),
        interpolated: false,
        set_by_clearance: false,
        rule,
        table_row: format!(
            "{} kV peak row, 30 kHz < f ≤ 100 kHz column, {}: {} mm at PD1",
            format_number(row),
            Quantity::from_typed(spec.frequency),
            format_number(table_mm)
        ),
        source: HIGH_FREQUENCY_CREEPAGE_SOURCE.cite(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec(kv: f64, khz: f64, grade: InsulationGrade) -> HighFrequencySpec {
        HighFrequencySpec {
            working_voltage_peak: si(kv * 1000.0),
            frequency: si(khz * 1000.0),
            pollution_degree: PollutionDegree::Two,
            grade,
            altitude: si(0.0),
        }
    }

    #[test]
    fn creepage_steps_up_and_scales() {
        // IEC 60664-4:2005 Table 2, 30–100 kHz column: 0.6 kV → 0.267 mm at PD1; × 1.2 at PD2
        // (values recalled from memory)
        let c = high_frequency_creepage(&spec(0.55, 65.0, InsulationGrade::Basic)).unwrap();
        assert!((c.creepage.value - 0.267e-3 * 1.2).abs() < 1e-12);
        let r = high_frequency_creepage(&spec(0.55, 65.0, InsulationGrade::Reinforced)).unwrap();
        assert!((r.creepage.value - 2.0 * c.creepage.value).abs() < 1e-15);
        assert!(high_frequency_creepage(&spec(0.55, 130.0, InsulationGrade::Basic)).is_err());
        assert!(high_frequency_creepage(&spec(0.55, 30.0, InsulationGrade::Basic)).is_err());
        assert!(high_frequency_creepage(&spec(1.05, 65.0, InsulationGrade::Basic)).is_err());
    }

    #[test]
    fn clearance_has_the_pollution_floor() {
        // IEC 62368-1:2018 Table 11: 0.6 kV → 0.07 mm, raised to 0.2 mm at PD2; 1.0 kV → 0.7 mm
        // (values recalled from memory)
        let c = high_frequency_clearance(&spec(0.6, 65.0, InsulationGrade::Basic)).unwrap();
        assert!((c.clearance.value - 0.2e-3).abs() < 1e-12);
        let c = high_frequency_clearance(&spec(0.95, 65.0, InsulationGrade::Reinforced)).unwrap();
        assert!((c.clearance.value - 1.4e-3).abs() < 1e-12);
        assert!(high_frequency_clearance(&spec(0.6, 20.0, InsulationGrade::Basic)).is_err());
    }
}

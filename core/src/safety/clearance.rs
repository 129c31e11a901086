//! Clearance (distance through air) to withstand transient overvoltages (IEC 60664-1:2020
//! Table F.2) and the peak working voltage (steady-state table; IEC 62368-1:2018 procedure 1),
//! with the reinforced-insulation rules and the altitude factor.

use super::classes::{FieldCase, InsulationGrade, PollutionDegree};
use super::impulse::{altitude_correction, AltitudeCorrection};
use super::tables::{
    CLEARANCE, CLEARANCE_SOURCE, POLLUTION_MINIMUM_CLEARANCE, POLLUTION_MINIMUM_SOURCE,
    PREFERRED_IMPULSE, STEADY_STATE_CLEARANCE, STEADY_STATE_CLEARANCE_SOURCE,
};
use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::validate::{non_negative, positive};
use crate::units::{format_number, si, ElectricPotential, Length, Quantity};

/// What a clearance must withstand, and where.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ClearanceSpec {
    /// Impulse withstand voltage required for basic insulation (peak), e.g. the rated impulse
    /// voltage from [`super::rated_impulse_voltage`].
    pub impulse_voltage: ElectricPotential,
    /// Field case (assume inhomogeneous unless the electrodes are known to make it homogeneous).
    pub field: FieldCase,
    /// Pollution degree at the clearance.
    pub pollution_degree: PollutionDegree,
    /// Grade of insulation.
    pub grade: InsulationGrade,
    /// Altitude of installation (0 … 10 000 m).
    pub altitude: Length,
}

/// A required clearance and how it was found.
#[derive(Clone, Debug, PartialEq)]
pub struct Clearance {
    /// The required clearance at the given altitude.
    pub clearance: Length,
    /// The clearance from Table F.2 (valid up to 2000 m), before the altitude factor.
    pub clearance_up_to_2000m: Length,
    /// The impulse voltage the table was entered with (after the reinforced step).
    pub withstand_voltage_peak: ElectricPotential,
    /// The altitude multiplication factor applied.
    pub altitude_factor: f64,
    /// The rule that set the value.
    pub rule: String,
    /// The table row and column used.
    pub table_row: String,
    /// Standard, edition, table and provenance.
    pub source: String,
}

/// The parts of a clearance lookup that every clearance rule finishes the same way.
pub(super) struct ClearanceLookup {
    /// The table value (mm) before any floor or multiplier.
    pub table_mm: f64,
    /// Apply the pollution-degree minimum clearance of Table F.2 to the table value.
    pub floor: Option<PollutionDegree>,
    /// Grade multiplier (2 for double insulation or a doubled high-frequency value).
    pub multiplier: f64,
    /// The voltage the table was entered with.
    pub withstand_voltage_peak: ElectricPotential,
    /// The rule so far.
    pub rule: String,
    /// Row and column text (the table value is appended).
    pub table_row: String,
    /// Standard, edition, table and provenance of the table.
    pub source: String,
}

/// Applies the pollution-degree floor, the multiplier and the altitude factor, and writes the
/// rule: d = max(table, floor) × multiplier × altitude factor.
pub(super) fn finish_clearance(l: ClearanceLookup, alt: &AltitudeCorrection) -> Clearance {
    let mut rule = l.rule;
    let floor_mm = l
        .floor
        .map_or(0.0, |pd| POLLUTION_MINIMUM_CLEARANCE[pd.index()]);
    if let Some(pd) = l.floor.filter(|_| floor_mm > l.table_mm) {
        rule.push_str(&format!(
            "; raised to the {pd} minimum of {} mm ({})",
            format_number(floor_mm),
            POLLUTION_MINIMUM_SOURCE.cite()
        ));
    }
    let base = l.table_mm.max(floor_mm) * 1e-3 * l.multiplier;
    rule.push_str(&format!(
        "; table steps up to the next row; × altitude factor {} ({})",
        format_number(alt.factor),
        alt.table_row
    ));
    Clearance {
        clearance: si(base * alt.factor),
        clearance_up_to_2000m: si(base),
        withstand_voltage_peak: l.withstand_voltage_peak,
        altitude_factor: alt.factor,
        rule,
        table_row: format!("{}: {} mm", l.table_row, format_number(l.table_mm)),
        source: format!("{}; altitude {}", l.source, alt.source),
    }
}

/// Looks up Table F.2: the first row at or above `kv`; None above the last row.
fn table_f2(kv: f64, field: FieldCase, pd: PollutionDegree) -> Option<(f64, f64)> {
    CLEARANCE
        .iter()
        .find(|r| kv <= r.0 * (1.0 + 1e-9))
        .map(|r| {
            let col = match field {
                FieldCase::Inhomogeneous => r.1,
                FieldCase::Homogeneous => r.2,
            };
            (r.0, col[pd.index()])
        })
}

/// The impulse voltage reinforced insulation is dimensioned for, and the rule's text.
///
/// IEC 60664-1:2020 5.1.6: one step higher in the preferred series (4.2.3) than for basic
/// insulation; where the basic value is not from the preferred series, 160 % of it.
pub fn reinforced_withstand_voltage(
    basic: ElectricPotential,
) -> Result<(ElectricPotential, String)> {
    let v = positive("impulse_voltage", basic)?.value;
    if let Some(i) = PREFERRED_IMPULSE
        .iter()
        .position(|p| (p - v).abs() <= 1e-9 * p)
    {
        let next = PREFERRED_IMPULSE.get(i + 1).ok_or_else(|| {
            Error::out_of_range(format!(
                "`impulse_voltage` = {}: no preferred impulse step above it in gapwise's data (IEC 60664-1:2020 4.2.3)",
                Quantity::from_typed(basic)
            ))
        })?;
        Ok((
            si(*next),
            format!(
                "reinforced: one preferred impulse step above {} V, i.e. {} V (IEC 60664-1:2020 5.1.6)",
                format_number(v),
                format_number(*next)
            ),
        ))
    } else {
        Ok((
            si(1.6 * v),
            format!(
                "reinforced: {} V is not a preferred impulse value, so 160 % of it, {} V (IEC 60664-1:2020 5.1.6)",
                format_number(v),
                format_number(1.6 * v)
            ),
        ))
    }
}

/// Required clearance for a grade of insulation.
///
/// Rule: Table F.2 is entered with the required impulse withstand voltage and steps up to the
/// next row (no interpolation). Functional, basic and supplementary insulation use the basic
/// voltage; reinforced uses one preferred step higher or 160 % ([`reinforced_withstand_voltage`]);
/// double insulation is basic plus supplementary, reported as the sum of the two (2 × basic).
/// The table value (valid up to 2000 m) is multiplied by the altitude factor of Table A.2.
/// Valid for 0 < U ≤ 100 kV after the reinforced step (the 0.33 kV row covers lower voltages);
/// above is an error.
/// Note: the two reinforced rules of 5.1.6 are not monotonic together: 3.9 kV basic (not a
/// preferred value) gives 160 % = 6.24 kV and the 8 kV row, while 4.0 kV basic (preferred) gives
/// the 6 kV row. gapwise applies the standard's rule as written and says which one it used.
/// Reference: IEC 60664-1:2020 Table F.2, 5.1.6 and Table A.2 (values recalled from memory).
pub fn clearance_distance(spec: &ClearanceSpec) -> Result<Clearance> {
    let basic = positive("impulse_voltage", spec.impulse_voltage)?;
    let alt = altitude_correction(spec.altitude)?;
    let (u, rule, multiplier) = match spec.grade {
        InsulationGrade::Reinforced => {
            let (u, r) = reinforced_withstand_voltage(basic)?;
            (u, r, 1.0)
        }
        InsulationGrade::Double => (
            basic,
            "double: basic plus supplementary, each dimensioned as basic (IEC 60664-1:2020 5.1.6); the sum is shown".to_string(),
            2.0,
        ),
        g => (
            basic,
            format!("{g}: dimensioned for the required impulse withstand voltage (IEC 60664-1:2020 5.1.5)"),
            1.0,
        ),
    };
    let kv = u.value / 1000.0;
    let (row, mm) = table_f2(kv, spec.field, spec.pollution_degree).ok_or_else(|| {
        Error::out_of_range(format!(
            "impulse withstand voltage {} is above the last row (100 kV) of {}",
            Quantity::from_typed(u),
            CLEARANCE_SOURCE.cite()
        ))
    })?;
    Ok(finish_clearance(
        ClearanceLookup {
            table_mm: mm,
            floor: None,
            multiplier,
            withstand_voltage_peak: u,
            rule,
            table_row: format!(
                "{} kV row, {} field, {}",
                format_number(row),
                spec.field.as_str(),
                spec.pollution_degree
            ),
            source: CLEARANCE_SOURCE.cite(),
        },
        &alt,
    ))
}

/// What a clearance must withstand from the working voltage itself.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct WorkingClearanceSpec {
    /// Peak working voltage across the clearance (steady state, temporary overvoltage or
    /// recurring peak), at frequencies up to 30 kHz.
    pub working_voltage_peak: ElectricPotential,
    /// Field case (assume inhomogeneous unless the electrodes are known to make it homogeneous).
    pub field: FieldCase,
    /// Pollution degree at the clearance.
    pub pollution_degree: PollutionDegree,
    /// Grade of insulation.
    pub grade: InsulationGrade,
    /// Altitude of installation (0 … 10 000 m).
    pub altitude: Length,
}

/// Required clearance to withstand the peak working voltage (procedure 1).
///
/// Formula: d = max(d_table(U), d_min(PD)) × k_alt × (2 for double insulation), where
/// d_table is the first row of the steady-state clearance table at or above U (no
/// interpolation), U = Û for functional, basic and supplementary insulation and 1.6·Û for
/// reinforced insulation (IEC 60664-1:2020 5.1.6: 160 % of the voltage basic insulation must
/// withstand), d_min is the pollution-degree minimum of Table F.2 (0 / 0.2 / 0.8 mm; applying it
/// here is an assumption on the safe side) and k_alt the altitude factor of Table A.2.
/// Assumptions: the voltage stress is at or below 30 kHz (above, see
/// [`super::high_frequency_clearance`] as well). Valid for 0 ≤ U ≤ 50 kV after the reinforced
/// factor (the 0.04 kV row covers lower voltages); above is an error.
/// Reference: IEC 60664-1:2020 steady-state clearance table (Table F.7a in the 2007 edition),
/// 5.1.6, Table A.2; IEC 62368-1:2018 5.4.2.2 procedure 1 (values recalled from memory).
pub fn clearance_for_working_voltage(spec: &WorkingClearanceSpec) -> Result<Clearance> {
    let peak = non_negative("working_voltage_peak", spec.working_voltage_peak)?;
    let alt = altitude_correction(spec.altitude)?;
    let (u, rule, multiplier) = match spec.grade {
        InsulationGrade::Reinforced => (
            1.6 * peak.value,
            format!(
                "reinforced: dimensioned for 160 % of the peak working voltage, {} V (IEC 60664-1:2020 5.1.6)",
                format_number(1.6 * peak.value)
            ),
            1.0,
        ),
        InsulationGrade::Double => (
            peak.value,
            "double: basic plus supplementary, each dimensioned as basic; the sum is shown".to_string(),
            2.0,
        ),
        g => (
            peak.value,
            format!("{g}: dimensioned for the peak working voltage"),
            1.0,
        ),
    };
    let kv = u / 1000.0;
    let (row, case_a, case_b) = *STEADY_STATE_CLEARANCE
        .iter()
        .find(|r| kv <= r.0 * (1.0 + 1e-9))
        .ok_or_else(|| {
            Error::out_of_range(format!(
                "`working_voltage_peak` = {} needs the {} V row, above the last row (50 kV) of {}",
                Quantity::from_typed(peak),
                format_number(u),
                STEADY_STATE_CLEARANCE_SOURCE.cite()
            ))
        })?;
    let table_mm = match spec.field {
        FieldCase::Inhomogeneous => case_a,
        FieldCase::Homogeneous => case_b,
    };
    Ok(finish_clearance(
        ClearanceLookup {
            table_mm,
            floor: Some(spec.pollution_degree),
            multiplier,
            withstand_voltage_peak: si(u),
            rule,
            table_row: format!(
                "{} kV peak row, {} field",
                format_number(row),
                spec.field.as_str()
            ),
            source: format!(
                "{}; IEC 62368-1:2018 5.4.2.2 procedure 1",
                STEADY_STATE_CLEARANCE_SOURCE.cite()
            ),
        },
        &alt,
    ))
}

crate::serialize_as_record!(Clearance);

impl Record for Clearance {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("clearance", self.clearance),
            Field::quantity("clearance_up_to_2000m", self.clearance_up_to_2000m),
            Field::quantity("withstand_voltage_peak", self.withstand_voltage_peak),
            Field::new("altitude_factor", self.altitude_factor),
            Field::new("rule", self.rule.as_str()),
            Field::new("table_row", self.table_row.as_str()),
            Field::new("source", self.source.as_str()),
        ]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec(kv: f64, grade: InsulationGrade) -> ClearanceSpec {
        ClearanceSpec {
            impulse_voltage: si(kv * 1000.0),
            field: FieldCase::Inhomogeneous,
            pollution_degree: PollutionDegree::Two,
            grade,
            altitude: si(0.0),
        }
    }

    #[test]
    fn steps_up_and_reinforces() {
        // IEC 60664-1:2020 Table F.2 case A PD2 (value recalled from memory)
        let c = clearance_distance(&spec(2.5, InsulationGrade::Basic)).unwrap();
        assert!((c.clearance.value - 1.5e-3).abs() < 1e-12);
        let c = clearance_distance(&spec(2.2, InsulationGrade::Basic)).unwrap();
        assert!((c.clearance.value - 1.5e-3).abs() < 1e-12, "steps up");
        let c = clearance_distance(&spec(2.5, InsulationGrade::Reinforced)).unwrap();
        assert!((c.clearance.value - 3.0e-3).abs() < 1e-12);
        // 2.2 kV is not preferred: 160 % = 3.52 kV → 4 kV row, 3.0 mm
        let c = clearance_distance(&spec(2.2, InsulationGrade::Reinforced)).unwrap();
        assert!((c.withstand_voltage_peak.value - 3520.0).abs() < 1e-9);
        assert!((c.clearance.value - 3.0e-3).abs() < 1e-12);
        assert!(clearance_distance(&spec(12.0, InsulationGrade::Reinforced)).is_err());
        // rows above 12 kV: 15 kV row, 18 mm
        let c = clearance_distance(&spec(12.5, InsulationGrade::Basic)).unwrap();
        assert!((c.clearance.value - 18.0e-3).abs() < 1e-12);
        assert!(clearance_distance(&spec(100.5, InsulationGrade::Basic)).is_err());
    }

    fn working(kv: f64, grade: InsulationGrade, pd: PollutionDegree) -> WorkingClearanceSpec {
        WorkingClearanceSpec {
            working_voltage_peak: si(kv * 1000.0),
            field: FieldCase::Inhomogeneous,
            pollution_degree: pd,
            grade,
            altitude: si(0.0),
        }
    }

    #[test]
    fn working_voltage_steps_up_with_floor_and_160_percent() {
        // IEC 60664-1:2020 steady-state clearance table, case A (value recalled from memory)
        let c = clearance_for_working_voltage(&working(
            0.9,
            InsulationGrade::Basic,
            PollutionDegree::One,
        ))
        .unwrap();
        assert!(
            (c.clearance.value - 0.26e-3).abs() < 1e-12,
            "steps up to the 1.0 kV row"
        );
        let c = clearance_for_working_voltage(&working(
            0.5,
            InsulationGrade::Basic,
            PollutionDegree::Two,
        ))
        .unwrap();
        assert!((c.clearance.value - 0.2e-3).abs() < 1e-12, "PD2 floor");
        // reinforced: 1.6 × 0.9 kV = 1.44 kV → 1.5 kV row, 0.76 mm
        let c = clearance_for_working_voltage(&working(
            0.9,
            InsulationGrade::Reinforced,
            PollutionDegree::Two,
        ))
        .unwrap();
        assert!((c.clearance.value - 0.76e-3).abs() < 1e-12);
        assert!(clearance_for_working_voltage(&working(
            50.1,
            InsulationGrade::Basic,
            PollutionDegree::Two
        ))
        .is_err());
        assert!(clearance_for_working_voltage(&working(
            -0.1,
            InsulationGrade::Basic,
            PollutionDegree::Two
        ))
        .is_err());
    }
}

//! Creepage distance (along a surface) against tracking (IEC 60664-1:2020 Table F.5, Table F.4
//! in the 2007 edition), with the printed-wiring columns, interpolation, the reinforced
//! doubling, the clearance floor and the groove rule.

use super::classes::{InsulationGrade, MaterialGroup, PollutionDegree};
use super::tables::{
    CREEPAGE, CREEPAGE_ROUNDING_SOURCE, CREEPAGE_ROUNDING_STEP_MM, CREEPAGE_SOURCE,
    GROOVE_REDUCTION_BELOW_CLEARANCE, GROOVE_SOURCE, GROOVE_WIDTH,
};
use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::validate::{non_negative, positive};
use crate::units::{format_number, si, ElectricPotential, Length, Quantity};

/// What a creepage distance must withstand, and on what.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CreepageSpec {
    /// RMS working voltage across the path (10 … 1000 V).
    pub working_voltage_rms: ElectricPotential,
    /// Pollution degree at the surface.
    pub pollution_degree: PollutionDegree,
    /// Material group of the insulating surface.
    pub material_group: MaterialGroup,
    /// Grade of insulation.
    pub grade: InsulationGrade,
    /// True for a path on printed-wiring material (uses the printed-wiring columns where
    /// they apply).
    pub printed_board: bool,
    /// The clearance required across the same path, if known: creepage is never less.
    pub minimum_clearance: Option<Length>,
    /// Round an interpolated basic value up to the next 0.1 mm, as IEC 62368-1:2018 Table 17's
    /// note asks, capped at the upper row's value (IEC 60664-1:2020 interpolates without
    /// rounding).
    pub round_interpolated: bool,
}

/// A required creepage distance and how it was found.
#[derive(Clone, Debug, PartialEq)]
pub struct Creepage {
    /// The required creepage distance.
    pub creepage: Length,
    /// The basic-insulation value from the table (interpolated where needed).
    pub basic_creepage: Length,
    /// True when the value lies between two rows and was interpolated linearly.
    pub interpolated: bool,
    /// True when the required clearance set the value (creepage ≥ clearance).
    pub set_by_clearance: bool,
    /// The rule that set the value.
    pub rule: String,
    /// The row(s) and column used.
    pub table_row: String,
    /// Standard, edition, table and provenance.
    pub source: String,
}

fn column(spec: &CreepageSpec) -> (usize, String) {
    let pd = spec.pollution_degree;
    let g = spec.material_group;
    if spec.printed_board {
        match pd {
            PollutionDegree::One => return (0, "printed wiring, PD1, all material groups".into()),
            PollutionDegree::Two if g != MaterialGroup::IIIb => {
                return (
                    1,
                    "printed wiring, PD2, all material groups except IIIb".into(),
                )
            }
            _ => {}
        }
    }
    let note = if spec.printed_board {
        " (the printed-wiring columns do not cover this case)"
    } else {
        ""
    };
    match pd {
        PollutionDegree::One => (2, format!("PD1, all material groups{note}")),
        PollutionDegree::Two => (
            3 + g.column(),
            format!("PD2, material group {}{note}", group_column_name(g)),
        ),
        PollutionDegree::Three => (
            6 + g.column(),
            format!("PD3, material group {}{note}", group_column_name(g)),
        ),
    }
}

fn group_column_name(g: MaterialGroup) -> &'static str {
    match g {
        MaterialGroup::I => "I",
        MaterialGroup::II => "II",
        MaterialGroup::IIIa | MaterialGroup::IIIb => "III (IIIa and IIIb)",
    }
}

/// Basic creepage from the table: (mm, the upper row's value when interpolated, row text).
/// Out of range is an error.
fn table_f5(v: f64, col: usize) -> Result<(f64, Option<f64>, String)> {
    let first = CREEPAGE[0].0;
    let last = CREEPAGE[CREEPAGE.len() - 1].0;
    if !(v.is_finite() && v >= first * (1.0 - 1e-12) && v <= last * (1.0 + 1e-12)) {
        return Err(Error::out_of_range(format!(
            "`working_voltage` = {} is outside the rows {} V … {} V (RMS) of {}",
            Quantity::from_typed(si::<ElectricPotential>(v)),
            format_number(first),
            format_number(last),
            CREEPAGE_SOURCE.cite()
        )));
    }
    if let Some(r) = CREEPAGE.iter().find(|r| (r.0 - v).abs() <= 1e-9 * r.0) {
        return Ok((r.1[col], None, format!("{} V row", format_number(r.0))));
    }
    let i = CREEPAGE
        .iter()
        .position(|r| r.0 > v)
        .expect("range checked above");
    let (v0, r0) = CREEPAGE[i - 1];
    let (v1, r1) = CREEPAGE[i];
    let mm = r0[col] + (r1[col] - r0[col]) * (v - v0) / (v1 - v0);
    Ok((
        mm,
        Some(r1[col]),
        format!(
            "interpolated linearly between the {} V and {} V rows",
            format_number(v0),
            format_number(v1)
        ),
    ))
}

/// `x` rounded up to the next multiple of `step`; a value within 1e-9 of a step of a multiple
/// stays on it.
fn round_up_to_step(x: f64, step: f64) -> f64 {
    let n = x / step;
    let k = n.round();
    if (n - k).abs() <= 1e-9 {
        k * step
    } else {
        n.ceil() * step
    }
}

/// Required creepage distance for a grade of insulation.
///
/// Rule: the basic value comes from Table F.5 for the RMS working voltage, pollution degree and
/// material group; on printed-wiring material the printed-wiring columns apply for PD1 (all
/// groups) and PD2 (all groups except IIIb), otherwise the general columns. Between rows the
/// value is interpolated linearly, as the table's note permits; with `round_interpolated` the
/// interpolated basic value is rounded up to the next 0.1 mm (IEC 62368-1:2018 Table 17 note;
/// value recalled from memory), but never above the value of the upper row (which the table
/// gives a higher voltage; without this cap the rounded value at 14 V, 0.5 mm, would exceed
/// the 16 V row's 0.45 mm: gapwise's reading, common practice, no published source);
/// otherwise it is not rounded (IEC 60664-1:2020). Functional and
/// supplementary insulation use the basic value; reinforced and double insulation twice it
/// (IEC 60664-1:2020 5.2.5). A creepage distance is never less than the required clearance
/// across the same path (5.2.2). Valid for 10 … 1000 V RMS; outside is an error.
/// Reference: IEC 60664-1:2020 Table F.5 (Table F.4 in the 2007 edition), 5.2.2, 5.2.5
/// (values recalled from memory); IEC 62368-1:2018 Table 17 carries the same general columns
/// (value recalled from memory).
pub fn creepage_distance(spec: &CreepageSpec) -> Result<Creepage> {
    let v = non_negative("working_voltage", spec.working_voltage_rms)?.value;
    let (col, col_text) = column(spec);
    let (mm, upper_row, mut row_text) = table_f5(v, col)?;
    let interpolated = upper_row.is_some();
    let mm = match upper_row {
        Some(upper) if spec.round_interpolated => {
            let r = round_up_to_step(mm, CREEPAGE_ROUNDING_STEP_MM);
            if r > upper {
                // Rounding up must not ask more than the table gives the next higher voltage:
                // otherwise 14 V (0.433 mm → 0.5 mm) would need more than 16 V (0.45 mm).
                row_text.push_str(&format!(
                    " ({} mm); rounding up to the next {} mm ({}) would exceed the upper row's {} mm, so the upper row's value",
                    format_number(mm),
                    format_number(CREEPAGE_ROUNDING_STEP_MM),
                    CREEPAGE_ROUNDING_SOURCE.cite(),
                    format_number(upper)
                ));
                upper
            } else if (r - mm).abs() <= 1e-9 {
                row_text.push_str(&format!(
                    " ({} mm, already a multiple of {} mm: no rounding needed, {})",
                    format_number(mm),
                    format_number(CREEPAGE_ROUNDING_STEP_MM),
                    CREEPAGE_ROUNDING_SOURCE.cite()
                ));
                r
            } else {
                row_text.push_str(&format!(
                    " ({} mm), rounded up to the next {} mm, {} mm ({})",
                    format_number(mm),
                    format_number(CREEPAGE_ROUNDING_STEP_MM),
                    format_number(r),
                    CREEPAGE_ROUNDING_SOURCE.cite()
                ));
                r
            }
        }
        _ => mm,
    };
    let basic = mm * 1e-3;
    let (mut value, mut rule) = if spec.grade.is_double_strength() {
        (
            2.0 * basic,
            format!(
                "{}: twice the basic creepage, 2 × {} mm = {} mm (IEC 60664-1:2020 5.2.5)",
                spec.grade,
                format_number(mm),
                format_number(2.0 * mm)
            ),
        )
    } else {
        (
            basic,
            format!(
                "{}: the table value for basic insulation, {} mm",
                spec.grade,
                format_number(mm)
            ),
        )
    };
    if spec.pollution_degree == PollutionDegree::Three
        && spec.material_group == MaterialGroup::IIIb
        && v > 630.0
    {
        rule.push_str(&format!(
            "; note: the table does not recommend group IIIb at pollution degree 3 above 630 V ({} note)",
            CREEPAGE_SOURCE.cite()
        ));
    }
    let mut set_by_clearance = false;
    if let Some(c) = spec.minimum_clearance {
        let c = non_negative("minimum_clearance", c)?.value;
        if c > value {
            value = c;
            set_by_clearance = true;
            rule.push_str("; raised to the required clearance (creepage is never less than clearance, IEC 60664-1:2020 5.2.2)");
        }
    }
    Ok(Creepage {
        creepage: si(value),
        basic_creepage: si(basic),
        interpolated,
        set_by_clearance,
        rule,
        table_row: format!("{row_text}, {col_text}"),
        source: CREEPAGE_SOURCE.cite(),
    })
}

crate::serialize_as_record!(Creepage);

impl Record for Creepage {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("creepage", self.creepage),
            Field::quantity("basic_creepage", self.basic_creepage),
            Field::new("interpolated", self.interpolated),
            Field::new("set_by_clearance", self.set_by_clearance),
            Field::new("rule", self.rule.as_str()),
            Field::new("table_row", self.table_row.as_str()),
            Field::new("source", self.source.as_str()),
        ]
    }
}

/// The narrowest groove (slot) that counts as a break in a creepage path.
#[derive(Clone, Debug, PartialEq)]
pub struct GrooveWidth {
    /// Minimum width for the groove to count; a narrower groove is bridged and the creepage
    /// is measured straight across it.
    pub minimum_width: Length,
    /// The rule that set it.
    pub rule: String,
    /// Standard, edition, clause and provenance.
    pub source: String,
}

/// Minimum groove width for it to count in a creepage path.
///
/// Rule: X = 0.25 mm (PD1), 1.0 mm (PD2), 1.5 mm (PD3); where the associated clearance is below
/// 3 mm, X may be reduced to one third of that clearance (never increased by it); exactly 3 mm
/// is not below. Valid for a positive associated clearance (zero is an error).
/// Reference: IEC 60664-1:2020 6.8 (6.2 in the 2007 edition; value recalled from memory).
pub fn minimum_groove_width(
    pollution_degree: PollutionDegree,
    associated_clearance: Option<Length>,
) -> Result<GrooveWidth> {
    let x = GROOVE_WIDTH[pollution_degree.index()];
    let mut rule = format!(
        "{pollution_degree}: grooves narrower than {} mm are bridged",
        format_number(x)
    );
    let mut width = x;
    if let Some(c) = associated_clearance {
        // a zero clearance would make every groove count: refused
        let c_mm = positive("associated_clearance", c)?.value * 1e3;
        if c_mm < GROOVE_REDUCTION_BELOW_CLEARANCE && c_mm / 3.0 < x {
            width = c_mm / 3.0;
            rule = format!(
                "{pollution_degree}: clearance {} mm is below 3 mm, so one third of it",
                format_number(c_mm)
            );
        }
    }
    Ok(GrooveWidth {
        minimum_width: si(width * 1e-3),
        rule,
        source: GROOVE_SOURCE.cite(),
    })
}

crate::serialize_as_record!(GrooveWidth);

impl Record for GrooveWidth {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("minimum_width", self.minimum_width),
            Field::new("rule", self.rule.as_str()),
            Field::new("source", self.source.as_str()),
        ]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spec(v: f64, grade: InsulationGrade, board: bool) -> CreepageSpec {
        CreepageSpec {
            working_voltage_rms: si(v),
            pollution_degree: PollutionDegree::Two,
            material_group: MaterialGroup::IIIb,
            grade,
            printed_board: board,
            minimum_clearance: None,
            round_interpolated: false,
        }
    }

    #[test]
    fn rows_interpolation_and_doubling() {
        // IEC 60664-1:2020 Table F.5, PD2 group III, 250 V row (value recalled from memory)
        let c = creepage_distance(&spec(250.0, InsulationGrade::Basic, false)).unwrap();
        assert!((c.creepage.value - 2.5e-3).abs() < 1e-12 && !c.interpolated);
        let c = creepage_distance(&spec(250.0, InsulationGrade::Reinforced, false)).unwrap();
        assert!((c.creepage.value - 5.0e-3).abs() < 1e-12);
        // same table, interpolated by hand: 2.5 + (3.2 − 2.5)·35/70 = 2.85 mm at 285 V
        let c = creepage_distance(&spec(285.0, InsulationGrade::Basic, false)).unwrap();
        assert!((c.creepage.value - 2.85e-3).abs() < 1e-12 && c.interpolated);
        assert!(creepage_distance(&spec(9.0, InsulationGrade::Basic, false)).is_err());
        assert!(creepage_distance(&spec(1001.0, InsulationGrade::Basic, false)).is_err());
    }

    #[test]
    fn groove() {
        // IEC 60664-1:2020 6.8 (value recalled from memory)
        let g = minimum_groove_width(PollutionDegree::Two, None).unwrap();
        assert!((g.minimum_width.value - 1.0e-3).abs() < 1e-12);
        let g = minimum_groove_width(PollutionDegree::Two, Some(si(1.5e-3))).unwrap();
        assert!((g.minimum_width.value - 0.5e-3).abs() < 1e-12);
    }
}

//! Requirements of one named barrier: clearance, creepage (in the product and on the printed
//! board), solid and thin-sheet insulation and the electric strength test voltage, each with
//! the rule and table row that set it.

use super::classes::{
    Barrier, FieldCase, InsulationGrade, MaterialGroup, OvervoltageCategory, PollutionDegree,
};
use super::clearance::{clearance_distance, ClearanceSpec};
use super::creepage::{creepage_distance, CreepageSpec};
use super::impulse::rated_impulse_voltage;
use super::tables::{
    CREEPAGE, SOLID_INSULATION_ABOVE_PEAK, SOLID_INSULATION_MINIMUM, SOLID_INSULATION_SOURCE,
    TEST_VOLTAGE_TEMPORARY, TEST_VOLTAGE_TEMPORARY_SOURCE, TEST_VOLTAGE_TRANSIENT,
    TEST_VOLTAGE_TRANSIENT_SOURCE, THIN_SHEET_LAYERS,
};
use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::validate::{non_negative, positive};
use crate::units::{format_number, si, ElectricPotential, Frequency, Length, Quantity};

/// The frequency above which IEC 62368-1 dimensions clearance and creepage differently
/// (5.4.2.3 and 5.4.3; value recalled from memory).
pub const HIGH_FREQUENCY_LIMIT_HZ: f64 = 30e3;

/// Everything that sets the requirements of one barrier.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BarrierSpec {
    /// Which barrier.
    pub barrier: Barrier,
    /// Grade of insulation wanted across it.
    pub grade: InsulationGrade,
    /// Nominal line-to-neutral mains voltage (RMS), e.g. 230 V.
    pub mains_voltage: ElectricPotential,
    /// Overvoltage category of the mains connection.
    pub overvoltage_category: OvervoltageCategory,
    /// Pollution degree.
    pub pollution_degree: PollutionDegree,
    /// Material group of the insulating surfaces.
    pub material_group: MaterialGroup,
    /// Altitude of installation.
    pub altitude: Length,
    /// Field case for clearances.
    pub field: FieldCase,
    /// Peak working voltage across the barrier.
    pub working_voltage_peak: ElectricPotential,
    /// RMS working voltage across the barrier.
    pub working_voltage_rms: ElectricPotential,
    /// Frequency of the working voltage (the switching frequency for a transformer barrier).
    pub working_frequency: Frequency,
    /// Impulse withstand voltage required for basic insulation, when not the mains' rated
    /// impulse voltage (e.g. a secondary circuit with its own transient level).
    pub impulse_voltage: Option<ElectricPotential>,
}

/// What one barrier needs, and why.
#[derive(Clone, Debug, PartialEq)]
pub struct BarrierRequirement {
    /// The barrier.
    pub barrier: Barrier,
    /// The grade of insulation.
    pub grade: InsulationGrade,
    /// Impulse withstand voltage required for basic insulation (peak).
    pub impulse_voltage_peak: ElectricPotential,
    /// Where the impulse voltage comes from.
    pub impulse_rule: String,
    /// Required clearance at the altitude.
    pub clearance: Length,
    /// Rule, row and source of the clearance.
    pub clearance_rule: String,
    /// Required creepage in the product (general columns: bobbins, housings, wiring).
    pub creepage: Length,
    /// Rule, row and source of the product creepage.
    pub creepage_rule: String,
    /// Required creepage on printed-wiring material.
    pub creepage_printed_board: Length,
    /// Rule, row and source of the printed-board creepage.
    pub creepage_printed_board_rule: String,
    /// Minimum distance through solid insulation (0 where no minimum applies).
    pub distance_through_insulation: Length,
    /// Thin-sheet layers when each layer alone passes the grade's electric strength test.
    pub thin_sheet_layers_each_passing: i64,
    /// Thin-sheet layers when any two layers together pass the test.
    pub thin_sheet_layers_any_two_passing: i64,
    /// Rule and source of the solid and thin-sheet values.
    pub solid_insulation_rule: String,
    /// Electric strength test voltage (peak or DC).
    pub test_voltage_peak: ElectricPotential,
    /// The same test as an RMS value at mains frequency (peak/√2).
    pub test_voltage_rms: ElectricPotential,
    /// Rule, row and source of the test voltage.
    pub test_voltage_rule: String,
    /// What these requirements do not cover and must be checked separately.
    pub not_covered: String,
}

fn test_voltage(spec: &BarrierSpec, impulse: f64) -> Result<(f64, String)> {
    if spec.grade == InsulationGrade::Functional {
        return Ok((
            0.0,
            format!(
                "functional insulation has no electric strength test ({}, {})",
                super::tables::IEC_62368_1,
                super::tables::RECALLED
            ),
        ));
    }
    let strong = spec.grade.is_double_strength();
    let kv = impulse / 1000.0;
    let row = TEST_VOLTAGE_TRANSIENT
        .iter()
        .find(|r| kv <= r.0 * (1.0 + 1e-9))
        .ok_or_else(|| {
            Error::out_of_range(format!(
                "impulse voltage {} is above the last row (8 kV) of {}",
                Quantity::from_typed(si::<ElectricPotential>(impulse)),
                TEST_VOLTAGE_TRANSIENT_SOURCE.cite()
            ))
        })?;
    let transient = if strong { row.2 } else { row.1 } * 1000.0;
    let mut best = (
        transient,
        format!(
            "{} kV peak from the transient voltage, {} kV row of {}",
            format_number(transient / 1000.0),
            format_number(row.0),
            TEST_VOLTAGE_TRANSIENT_SOURCE.cite()
        ),
    );
    if spec.barrier.sees_mains_transients() {
        let v = spec.mains_voltage.value;
        let t = TEST_VOLTAGE_TEMPORARY
            .iter()
            .find(|r| v <= r.0 * (1.0 + 1e-12))
            .ok_or_else(|| {
                Error::out_of_range(format!(
                    "`mains_voltage` = {} is above the last row (600 V) of {}",
                    Quantity::from_typed(spec.mains_voltage),
                    TEST_VOLTAGE_TEMPORARY_SOURCE.cite()
                ))
            })?;
        let temporary = if strong { t.2 } else { t.1 } * 1000.0;
        if temporary > best.0 {
            best = (
                temporary,
                format!(
                    "{} kV peak from temporary overvoltages, mains up to {} V row of {}",
                    format_number(temporary / 1000.0),
                    format_number(t.0),
                    TEST_VOLTAGE_TEMPORARY_SOURCE.cite()
                ),
            );
        } else {
            best.1.push_str(&format!(
                "; the temporary-overvoltage test ({} kV peak) is not higher",
                format_number(temporary / 1000.0)
            ));
        }
    }
    Ok(best)
}

/// Requirements of one barrier.
///
/// Rules, in order:
/// 1. Impulse voltage: the rated impulse voltage of the mains (IEC 60664-1:2020 Table F.1) for
///    barriers that see mains transients, or the given `impulse_voltage`; for the
///    secondary–earth barrier without one, category I of its own RMS working voltage
///    (assumption: a circuit not connected to the mains, IEC 60664-1:2020 4.3.3.3; value
///    recalled from memory).
/// 2. Clearance: [`super::clearance_distance`] (Table F.2, reinforced step, altitude).
/// 3. Creepage: [`super::creepage_distance`] at the RMS working voltage, in the product and on
///    printed wiring, never less than the clearance; below 10 V RMS the 10 V row is used
///    (common practice, no published source).
/// 4. Solid insulation: at least 0.4 mm through supplementary, reinforced or double insulation
///    above 71 V peak working voltage; thin sheet: 2 layers each passing the grade's test or 3
///    of which any two pass it (IEC 62368-1:2018 5.4.4.2 and 5.4.4.6; values recalled from memory).
/// 5. Electric strength: the higher of the transient-based and the temporary-overvoltage-based
///    test voltages (IEC 62368-1:2018 5.4.9.1; values recalled from memory).
///
/// Not covered (listed in `not_covered`): clearances and creepage for working voltages above
/// 30 kHz, clearance from the peak working voltage (IEC 62368-1:2018 procedure 1), and the
/// test voltage from the peak working voltage.
pub fn barrier_requirements(spec: &BarrierSpec) -> Result<BarrierRequirement> {
    let peak = non_negative("working_voltage_peak", spec.working_voltage_peak)?;
    let rms = non_negative("working_voltage_rms", spec.working_voltage_rms)?;
    positive("mains_voltage", spec.mains_voltage)?;
    let f = non_negative("working_frequency", spec.working_frequency)?;
    if rms.value > peak.value * (1.0 + 1e-9) {
        return Err(Error::invalid(format!(
            "`working_voltage_rms` ({}) cannot exceed `working_voltage_peak` ({})",
            Quantity::from_typed(rms),
            Quantity::from_typed(peak)
        )));
    }
    let (impulse, impulse_rule) = match spec.impulse_voltage {
        Some(u) => (
            positive("impulse_voltage", u)?,
            "given impulse withstand voltage".to_string(),
        ),
        None if spec.barrier.sees_mains_transients() => {
            let r = rated_impulse_voltage(spec.mains_voltage, spec.overvoltage_category)?;
            (
                r.impulse_voltage_peak,
                format!("rated impulse voltage, {}, {}", r.table_row, r.source),
            )
        }
        None => {
            let r = rated_impulse_voltage(si(rms.value.max(1e-3)), OvervoltageCategory::I)?;
            (
                r.impulse_voltage_peak,
                format!(
                    "secondary circuit, category I of its own working voltage (assumption), {}, {}",
                    r.table_row, r.source
                ),
            )
        }
    };
    let clearance = clearance_distance(&ClearanceSpec {
        impulse_voltage: impulse,
        field: spec.field,
        pollution_degree: spec.pollution_degree,
        grade: spec.grade,
        altitude: spec.altitude,
    })?;
    let first_row = CREEPAGE[0].0;
    let (v_table, low_note) = if rms.value < first_row {
        (
            si::<ElectricPotential>(first_row),
            format!(
                "; working voltage below the first row, the {} V row is used (common practice, no published source)",
                format_number(first_row)
            ),
        )
    } else {
        (rms, String::new())
    };
    let creep = |board: bool| {
        creepage_distance(&CreepageSpec {
            working_voltage_rms: v_table,
            pollution_degree: spec.pollution_degree,
            material_group: spec.material_group,
            grade: spec.grade,
            printed_board: board,
            minimum_clearance: Some(clearance.clearance),
        })
    };
    let product = creep(false)?;
    let board = creep(true)?;
    let (dti, layers, solid_rule) = {
        let (each, any_two) = match spec.grade {
            InsulationGrade::Functional => (0, 0),
            InsulationGrade::Basic => THIN_SHEET_LAYERS[0],
            InsulationGrade::Supplementary | InsulationGrade::Double => THIN_SHEET_LAYERS[1],
            InsulationGrade::Reinforced => THIN_SHEET_LAYERS[2],
        };
        let needs_thickness = matches!(
            spec.grade,
            InsulationGrade::Supplementary | InsulationGrade::Reinforced | InsulationGrade::Double
        ) && peak.value > SOLID_INSULATION_ABOVE_PEAK;
        let d = if needs_thickness {
            SOLID_INSULATION_MINIMUM * 1e-3
        } else {
            0.0
        };
        let text = if needs_thickness {
            format!(
                "{}: at least {} mm through solid insulation above {} V peak working voltage, or thin sheet in layers; {}",
                spec.grade,
                format_number(SOLID_INSULATION_MINIMUM),
                format_number(SOLID_INSULATION_ABOVE_PEAK),
                SOLID_INSULATION_SOURCE.cite()
            )
        } else {
            format!(
                "{}: no minimum thickness; {}",
                spec.grade,
                SOLID_INSULATION_SOURCE.cite()
            )
        };
        (d, (each, any_two), text)
    };
    let (tv, tv_rule) = test_voltage(spec, impulse.value)?;
    let mut not_covered = vec![
        "clearance from the peak working voltage (IEC 62368-1:2018 5.4.2.2 procedure 1)",
        "test voltage from the peak working voltage (IEC 62368-1:2018 5.4.9.1)",
    ];
    if f.value > HIGH_FREQUENCY_LIMIT_HZ {
        not_covered.push(
            "clearance and creepage for working voltages above 30 kHz (IEC 62368-1:2018 5.4.2.3 and 5.4.3; IEC 60664-4)",
        );
    }
    Ok(BarrierRequirement {
        barrier: spec.barrier,
        grade: spec.grade,
        impulse_voltage_peak: impulse,
        impulse_rule,
        clearance: clearance.clearance,
        clearance_rule: format!(
            "{}; {}; {}",
            clearance.rule, clearance.table_row, clearance.source
        ),
        creepage: product.creepage,
        creepage_rule: format!(
            "{}; {}{}; {}",
            product.rule, product.table_row, low_note, product.source
        ),
        creepage_printed_board: board.creepage,
        creepage_printed_board_rule: format!(
            "{}; {}{}; {}",
            board.rule, board.table_row, low_note, board.source
        ),
        distance_through_insulation: si(dti),
        thin_sheet_layers_each_passing: layers.0,
        thin_sheet_layers_any_two_passing: layers.1,
        solid_insulation_rule: solid_rule,
        test_voltage_peak: si(tv),
        test_voltage_rms: si(tv / std::f64::consts::SQRT_2),
        test_voltage_rule: tv_rule,
        not_covered: not_covered.join("; "),
    })
}

impl Record for BarrierRequirement {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::new("barrier", self.barrier.as_str()),
            Field::new("grade", self.grade.as_str()),
            Field::quantity("impulse_voltage_peak", self.impulse_voltage_peak),
            Field::new("impulse_rule", self.impulse_rule.as_str()),
            Field::quantity("clearance", self.clearance),
            Field::new("clearance_rule", self.clearance_rule.as_str()),
            Field::quantity("creepage", self.creepage),
            Field::new("creepage_rule", self.creepage_rule.as_str()),
            Field::quantity("creepage_printed_board", self.creepage_printed_board),
            Field::new(
                "creepage_printed_board_rule",
                self.creepage_printed_board_rule.as_str(),
            ),
            Field::quantity(
                "distance_through_insulation",
                self.distance_through_insulation,
            ),
            Field::new(
                "thin_sheet_layers_each_passing",
                self.thin_sheet_layers_each_passing,
            ),
            Field::new(
                "thin_sheet_layers_any_two_passing",
                self.thin_sheet_layers_any_two_passing,
            ),
            Field::new("solid_insulation_rule", self.solid_insulation_rule.as_str()),
            Field::quantity("test_voltage_peak", self.test_voltage_peak),
            Field::quantity("test_voltage_rms", self.test_voltage_rms),
            Field::new("test_voltage_rule", self.test_voltage_rule.as_str()),
            Field::new("not_covered", self.not_covered.as_str()),
        ]
    }
}

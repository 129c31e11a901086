//! Requirements of one named barrier: clearance, creepage (in the product and on the printed
//! board), solid and thin-sheet insulation and the electric strength test voltage, each with
//! the rule and table row that set it.

use super::classes::{
    Barrier, FieldCase, InsulationGrade, MaterialGroup, OvervoltageCategory, PollutionDegree,
};
use super::clearance::{
    clearance_distance, clearance_for_working_voltage, Clearance, ClearanceSpec,
    WorkingClearanceSpec,
};
use super::creepage::{creepage_distance, CreepageSpec};
use super::high_frequency::{high_frequency_clearance, high_frequency_creepage, HighFrequencySpec};
use super::impulse::rated_impulse_voltage;
use super::tables::{
    CREEPAGE, HIGH_FREQUENCY_CLEARANCE_SOURCE, HIGH_FREQUENCY_CREEPAGE_UP_TO_HZ,
    HIGH_FREQUENCY_LIMIT_HZ, HIGH_FREQUENCY_UP_TO_HZ, SOLID_INSULATION_ABOVE_PEAK,
    SOLID_INSULATION_MINIMUM, SOLID_INSULATION_SOURCE, TEST_VOLTAGE_TEMPORARY,
    TEST_VOLTAGE_TEMPORARY_SOURCE, TEST_VOLTAGE_TRANSIENT, TEST_VOLTAGE_TRANSIENT_SOURCE,
    THIN_SHEET_LAYERS,
};
use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::validate::{non_negative, positive};
use crate::units::{format_number, si, ElectricPotential, Frequency, Length, Quantity};

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
    /// Required clearance at the altitude: the largest of the three below.
    pub clearance: Length,
    /// Which clearance governs, with its rule, row and source.
    pub clearance_rule: String,
    /// Clearance for the transient overvoltages (IEC 60664-1:2020 Table F.2; IEC 62368-1:2018
    /// procedure 2).
    pub clearance_for_transients: Length,
    /// Clearance for the peak working voltage (steady-state table; IEC 62368-1:2018
    /// procedure 1).
    pub clearance_for_working_voltage: Length,
    /// Clearance for a working voltage above 30 kHz (0 m when the frequency is 30 kHz or less).
    pub clearance_for_high_frequency: Length,
    /// Rule, row and source of each of the three clearances.
    pub clearance_components_rule: String,
    /// Required creepage in the product (general columns: bobbins, housings, wiring).
    pub creepage: Length,
    /// Rule, row and source of the product creepage.
    pub creepage_rule: String,
    /// Required creepage on printed-wiring material.
    pub creepage_printed_board: Length,
    /// Rule, row and source of the printed-board creepage.
    pub creepage_printed_board_rule: String,
    /// Creepage for a working voltage above 30 kHz (0 m when the frequency is 30 kHz or less,
    /// or above the 100 kHz of gapwise's data: then `not_covered` says so). Already included in
    /// `creepage` and `creepage_printed_board`.
    pub creepage_for_high_frequency: Length,
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

fn test_voltage(spec: &BarrierSpec, impulse: f64, impulse_rule: &str) -> Result<(f64, String)> {
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
                "`impulse_voltage` = {} ({impulse_rule}) is above the last row (8 kV) of {}: no electric strength test voltage in gapwise's data",
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
///    secondary–earth barrier without one, the mains' rated impulse voltage one overvoltage
///    category lower (II → I), or category I of the secondary's own RMS working voltage if
///    that is higher (assumption on the safe side for a secondary isolated from the mains:
///    common practice, no published source).
/// 2. Clearance: the largest of (a) the transient clearance, [`super::clearance_distance`]
///    (Table F.2, reinforced step; IEC 62368-1:2018 procedure 2), (b) the clearance for the
///    peak working voltage, [`super::clearance_for_working_voltage`] (IEC 62368-1:2018
///    procedure 1), and (c) above 30 kHz the high-frequency clearance,
///    [`super::high_frequency_clearance`]; each × the altitude factor of Table A.2.
/// 3. Creepage: [`super::creepage_distance`] at the RMS working voltage, in the product and on
///    printed wiring, an interpolated value rounded up to the next 0.1 mm (IEC 62368-1:2018
///    Table 17 note) but never above the upper row's value; above 30 kHz (up to 100 kHz) at least [`super::high_frequency_creepage`]
///    at the peak working voltage; never less than the clearance. Below 10 V RMS the 10 V row
///    is used (common practice, no published source).
/// 4. Solid insulation: at least 0.4 mm through supplementary, reinforced or double insulation
///    above 71 V peak working voltage; thin sheet: 2 layers each passing the grade's test or 3
///    of which any two pass it (IEC 62368-1:2018 5.4.4.2 and 5.4.4.6; values recalled from memory).
/// 5. Electric strength: the higher of the transient-based and the temporary-overvoltage-based
///    test voltages (IEC 62368-1:2018 5.4.9.1; values recalled from memory).
///
/// Not covered (listed in `not_covered`): the test voltage from the peak working voltage
/// (IEC 62368-1:2018 5.4.9.1, its table is not in gapwise's data), and the high-frequency
/// creepage above 100 kHz.
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
    let last_row = CREEPAGE[CREEPAGE.len() - 1].0;
    if rms.value > last_row * (1.0 + 1e-12) {
        return Err(Error::out_of_range(format!(
            "`working_voltage_rms` = {} is above the last row ({} V RMS) of {}",
            Quantity::from_typed(rms),
            format_number(last_row),
            super::tables::CREEPAGE_SOURCE.cite()
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
            let lower = spec.overvoltage_category.one_lower();
            let from_mains = rated_impulse_voltage(spec.mains_voltage, lower)?;
            let own = rated_impulse_voltage(si(rms.value.max(1e-3)), OvervoltageCategory::I)?;
            let (r, which) =
                if own.impulse_voltage_peak.value > from_mains.impulse_voltage_peak.value {
                    (
                        own,
                        "category I of its own working voltage, which is higher",
                    )
                } else {
                    (
                        from_mains,
                        "the mains' rated impulse voltage one overvoltage category lower",
                    )
                };
            (
                r.impulse_voltage_peak,
                format!(
                    "secondary circuit isolated from the mains: {which} (assumption on the safe side: mains transients reach a floating secondary through the transformer's capacitance, attenuated by the isolation; common practice, no published source; give `impulse_voltage` when the secondary's transient level is known), {}, {}",
                    r.table_row, r.source
                ),
            )
        }
    };
    let transient = clearance_distance(&ClearanceSpec {
        impulse_voltage: impulse,
        field: spec.field,
        pollution_degree: spec.pollution_degree,
        grade: spec.grade,
        altitude: spec.altitude,
    })?;
    let working = clearance_for_working_voltage(&WorkingClearanceSpec {
        working_voltage_peak: peak,
        field: spec.field,
        pollution_degree: spec.pollution_degree,
        grade: spec.grade,
        altitude: spec.altitude,
    })?;
    let high_frequency = HighFrequencySpec {
        working_voltage_peak: peak,
        frequency: f,
        pollution_degree: spec.pollution_degree,
        grade: spec.grade,
        altitude: spec.altitude,
    };
    let above_30k = f.value > HIGH_FREQUENCY_LIMIT_HZ;
    if f.value > HIGH_FREQUENCY_UP_TO_HZ * (1.0 + 1e-12) {
        return Err(Error::out_of_range(format!(
            "`working_frequency` = {} is above the {} up to which the high-frequency clearance rules hold ({})",
            Quantity::from_typed(f),
            Quantity::from_typed(si::<Frequency>(HIGH_FREQUENCY_UP_TO_HZ)),
            HIGH_FREQUENCY_CLEARANCE_SOURCE.cite()
        )));
    }
    let hf_clearance = if above_30k {
        Some(high_frequency_clearance(&high_frequency)?)
    } else {
        None
    };
    let describe = |c: &Clearance| format!("{}; {}; {}", c.rule, c.table_row, c.source);
    let mut candidates: Vec<(&str, &Clearance)> = vec![
        ("transient overvoltages (procedure 2)", &transient),
        ("peak working voltage (procedure 1)", &working),
    ];
    if let Some(c) = &hf_clearance {
        candidates.push(("working voltage above 30 kHz", c));
    }
    let (governing_name, governing) = candidates.iter().copied().fold(candidates[0], |best, c| {
        if c.1.clearance.value > best.1.clearance.value {
            c
        } else {
            best
        }
    });
    let clearance_value = governing.clearance;
    let clearance_rule = format!(
        "the largest of the clearances for {}: {} for {}; {}",
        candidates
            .iter()
            .map(|c| c.0)
            .collect::<Vec<_>>()
            .join(", "),
        Quantity::from_typed(clearance_value),
        governing_name,
        describe(governing)
    );
    let mut components = vec![
        format!(
            "transients: {}, {}",
            Quantity::from_typed(transient.clearance),
            describe(&transient)
        ),
        format!(
            "peak working voltage: {}, {}",
            Quantity::from_typed(working.clearance),
            describe(&working)
        ),
    ];
    match &hf_clearance {
        Some(c) => components.push(format!(
            "above 30 kHz: {}, {}",
            Quantity::from_typed(c.clearance),
            describe(c)
        )),
        None => components.push(format!(
            "above 30 kHz: not applicable, the working frequency {} is 30 kHz or less",
            Quantity::from_typed(f)
        )),
    }
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
            minimum_clearance: Some(clearance_value),
            round_interpolated: true,
        })
    };
    let product = creep(false)?;
    let board = creep(true)?;
    let mut not_covered = Vec::new();
    if spec.grade != InsulationGrade::Functional {
        not_covered.push(
            "test voltage from the peak working voltage (IEC 62368-1:2018 5.4.9.1; its table is not in gapwise's data)".to_string(),
        );
    }
    let hf_creepage = if above_30k && f.value <= HIGH_FREQUENCY_CREEPAGE_UP_TO_HZ * (1.0 + 1e-12) {
        Some(high_frequency_creepage(&high_frequency)?)
    } else {
        if above_30k {
            not_covered.push(format!(
                "creepage for the working voltage at {}: gapwise's high-frequency creepage data stops at 100 kHz (IEC 62368-1:2018 Table 18, IEC 60664-4:2005 Table 2)",
                Quantity::from_typed(f)
            ));
        }
        None
    };
    let with_high_frequency = |value: Length, rule: String| {
        match &hf_creepage {
        Some(h) if h.creepage.value > value.value => (
            h.creepage,
            format!(
                "set by the working voltage above 30 kHz: {}; {}; {} (the low-frequency value, {}, is lower: {})",
                h.rule,
                h.table_row,
                h.source,
                Quantity::from_typed(value),
                rule
            ),
        ),
        Some(h) => (
            value,
            format!(
                "{rule}; the creepage for the working voltage above 30 kHz ({}) is not higher",
                Quantity::from_typed(h.creepage)
            ),
        ),
        None if above_30k => (
            value,
            format!(
                "{rule}; NOT INCLUDED: the creepage for the working voltage at {} (above the 100 kHz of gapwise's high-frequency data; check IEC 62368-1:2018 Table 18 separately)",
                Quantity::from_typed(f)
            ),
        ),
        None => (value, rule),
    }
    };
    let (creepage_value, creepage_rule) = with_high_frequency(
        product.creepage,
        format!(
            "{}; {}{}; {}",
            product.rule, product.table_row, low_note, product.source
        ),
    );
    let (board_value, board_rule) = with_high_frequency(
        board.creepage,
        format!(
            "{}; {}{}; {}",
            board.rule, board.table_row, low_note, board.source
        ),
    );
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
        let layers = if spec.grade == InsulationGrade::Functional {
            "no thin-sheet layers required".to_string()
        } else {
            format!(
                "thin sheet: {each} layer(s) each passing the {} electric strength test, or {any_two} of which any two together pass it (the check counts the latter)",
                spec.grade
            )
        };
        let text = if needs_thickness {
            format!(
                "{}: at least {} mm through solid insulation, as the peak working voltage {} exceeds {} V; or {layers}; {}",
                spec.grade,
                format_number(SOLID_INSULATION_MINIMUM),
                Quantity::from_typed(peak),
                format_number(SOLID_INSULATION_ABOVE_PEAK),
                SOLID_INSULATION_SOURCE.cite()
            )
        } else {
            format!(
                "{}: no minimum thickness (supplementary, reinforced and double only, above {} V peak); {layers}; {}",
                spec.grade,
                format_number(SOLID_INSULATION_ABOVE_PEAK),
                SOLID_INSULATION_SOURCE.cite()
            )
        };
        (d, (each, any_two), text)
    };
    let (tv, tv_rule) = test_voltage(spec, impulse.value, &impulse_rule)?;
    Ok(BarrierRequirement {
        barrier: spec.barrier,
        grade: spec.grade,
        impulse_voltage_peak: impulse,
        impulse_rule,
        clearance: clearance_value,
        clearance_rule,
        clearance_for_transients: transient.clearance,
        clearance_for_working_voltage: working.clearance,
        clearance_for_high_frequency: hf_clearance.as_ref().map_or(si(0.0), |c| c.clearance),
        clearance_components_rule: components.join(" | "),
        creepage: creepage_value,
        creepage_rule,
        creepage_printed_board: board_value,
        creepage_printed_board_rule: board_rule,
        creepage_for_high_frequency: hf_creepage.as_ref().map_or(si(0.0), |c| c.creepage),
        distance_through_insulation: si(dti),
        thin_sheet_layers_each_passing: layers.0,
        thin_sheet_layers_any_two_passing: layers.1,
        solid_insulation_rule: solid_rule,
        test_voltage_peak: si(tv),
        test_voltage_rms: si(tv / std::f64::consts::SQRT_2),
        test_voltage_rule: tv_rule,
        not_covered: if not_covered.is_empty() {
            "none".to_string()
        } else {
            not_covered.join("; ")
        },
    })
}

crate::serialize_as_record!(BarrierRequirement);

impl Record for BarrierRequirement {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::new("barrier", self.barrier.as_str()),
            Field::new("grade", self.grade.as_str()),
            Field::quantity("impulse_voltage_peak", self.impulse_voltage_peak),
            Field::new("impulse_rule", self.impulse_rule.as_str()),
            Field::quantity("clearance", self.clearance),
            Field::new("clearance_rule", self.clearance_rule.as_str()),
            Field::quantity("clearance_for_transients", self.clearance_for_transients),
            Field::quantity(
                "clearance_for_working_voltage",
                self.clearance_for_working_voltage,
            ),
            Field::quantity(
                "clearance_for_high_frequency",
                self.clearance_for_high_frequency,
            ),
            Field::new(
                "clearance_components_rule",
                self.clearance_components_rule.as_str(),
            ),
            Field::quantity("creepage", self.creepage),
            Field::new("creepage_rule", self.creepage_rule.as_str()),
            Field::quantity("creepage_printed_board", self.creepage_printed_board),
            Field::new(
                "creepage_printed_board_rule",
                self.creepage_printed_board_rule.as_str(),
            ),
            Field::quantity(
                "creepage_for_high_frequency",
                self.creepage_for_high_frequency,
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

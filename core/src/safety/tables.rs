//! Every table gapwise takes from an insulation standard, as data, in this one file: each with
//! its standard, edition, table number and provenance. Lookups live in the topic files and
//! refuse values outside a table's range.
//!
//! Provenance: these values were typed from the authors' knowledge of the standards, without a
//! copy at hand to check them. Every table is therefore marked `value recalled from memory`;
//! check them against your copy of the current edition before relying on them. The table and
//! clause numbers given for IEC 62368-1:2018 are recalled from memory as well.

/// Where a table comes from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct TableSource {
    /// The standard and edition (`IEC 60664-1:2020`).
    pub standard: &'static str,
    /// The table or clause (`Table F.2`).
    pub table: &'static str,
    /// How the values were obtained (`value recalled from memory`).
    pub provenance: &'static str,
}

impl TableSource {
    /// `IEC 60664-1:2020 Table F.2 (value recalled from memory)`.
    pub fn cite(&self) -> String {
        format!("{} {} ({})", self.standard, self.table, self.provenance)
    }
}

/// Provenance of every table here.
pub const RECALLED: &str = "value recalled from memory";

/// The insulation-coordination standard the tables come from.
pub const IEC_60664_1: &str = "IEC 60664-1:2020";
/// The equipment safety standard (edition 3) whose rules the barrier requirements follow.
pub const IEC_62368_1: &str = "IEC 62368-1:2018 (edition 3)";

// ---------------------------------------------------------------------------------------------
// IEC 60664-1:2020 Table F.1 — rated impulse voltage for equipment energised directly from the
// low-voltage mains.

/// Source of [`RATED_IMPULSE`].
pub const RATED_IMPULSE_SOURCE: TableSource = TableSource {
    standard: IEC_60664_1,
    table: "Table F.1",
    provenance: RECALLED,
};

/// Rows of Table F.1: line-to-neutral voltage (V RMS or DC) up to and including, then the rated
/// impulse voltage (V peak) for overvoltage categories I, II, III, IV. Rows above 1000 V are
/// not in gapwise's data.
pub const RATED_IMPULSE: [(f64, [f64; 4]); 6] = [
    (50.0, [330.0, 500.0, 800.0, 1500.0]),
    (100.0, [500.0, 800.0, 1500.0, 2500.0]),
    (150.0, [800.0, 1500.0, 2500.0, 4000.0]),
    (300.0, [1500.0, 2500.0, 4000.0, 6000.0]),
    (600.0, [2500.0, 4000.0, 6000.0, 8000.0]),
    (1000.0, [4000.0, 6000.0, 8000.0, 12000.0]),
];

/// The preferred series of impulse voltages (IEC 60664-1:2020 4.2.3), V peak; reinforced
/// clearance is dimensioned one step up this series (5.1.6).
pub const PREFERRED_IMPULSE: [f64; 9] = [
    330.0, 500.0, 800.0, 1500.0, 2500.0, 4000.0, 6000.0, 8000.0, 12000.0,
];

// ---------------------------------------------------------------------------------------------
// IEC 60664-1:2020 Table F.2 — clearances to withstand transient overvoltages, up to 2000 m.

/// Source of [`CLEARANCE`].
pub const CLEARANCE_SOURCE: TableSource = TableSource {
    standard: IEC_60664_1,
    table: "Table F.2",
    provenance: RECALLED,
};

/// Rows of Table F.2: required impulse withstand voltage (kV peak), then the minimum clearance
/// in mm for case A (inhomogeneous field) at pollution degree 1, 2, 3 and case B (homogeneous
/// field) at pollution degree 1, 2, 3. Above 12 kV every pollution degree has the same value.
/// Rows above 100 kV are not in gapwise's data.
pub const CLEARANCE: [(f64, [f64; 3], [f64; 3]); 26] = [
    (0.33, [0.01, 0.2, 0.8], [0.01, 0.2, 0.8]),
    (0.40, [0.02, 0.2, 0.8], [0.02, 0.2, 0.8]),
    (0.50, [0.04, 0.2, 0.8], [0.04, 0.2, 0.8]),
    (0.60, [0.06, 0.2, 0.8], [0.06, 0.2, 0.8]),
    (0.80, [0.10, 0.2, 0.8], [0.10, 0.2, 0.8]),
    (1.0, [0.15, 0.2, 0.8], [0.15, 0.2, 0.8]),
    (1.2, [0.25, 0.25, 0.8], [0.2, 0.2, 0.8]),
    (1.5, [0.5, 0.5, 0.8], [0.3, 0.3, 0.8]),
    (2.0, [1.0, 1.0, 1.0], [0.45, 0.45, 0.8]),
    (2.5, [1.5, 1.5, 1.5], [0.6, 0.6, 0.8]),
    (3.0, [2.0, 2.0, 2.0], [0.8, 0.8, 0.8]),
    (4.0, [3.0, 3.0, 3.0], [1.2, 1.2, 1.2]),
    (5.0, [4.0, 4.0, 4.0], [1.5, 1.5, 1.5]),
    (6.0, [5.5, 5.5, 5.5], [2.0, 2.0, 2.0]),
    (8.0, [8.0, 8.0, 8.0], [3.0, 3.0, 3.0]),
    (10.0, [11.0, 11.0, 11.0], [3.5, 3.5, 3.5]),
    (12.0, [14.0, 14.0, 14.0], [4.5, 4.5, 4.5]),
    (15.0, [18.0, 18.0, 18.0], [5.5, 5.5, 5.5]),
    (20.0, [25.0, 25.0, 25.0], [8.0, 8.0, 8.0]),
    (25.0, [33.0, 33.0, 33.0], [10.0, 10.0, 10.0]),
    (30.0, [40.0, 40.0, 40.0], [12.5, 12.5, 12.5]),
    (40.0, [60.0, 60.0, 60.0], [17.0, 17.0, 17.0]),
    (50.0, [75.0, 75.0, 75.0], [22.0, 22.0, 22.0]),
    (60.0, [90.0, 90.0, 90.0], [27.0, 27.0, 27.0]),
    (80.0, [130.0, 130.0, 130.0], [35.0, 35.0, 35.0]),
    (100.0, [170.0, 170.0, 170.0], [45.0, 45.0, 45.0]),
];

// ---------------------------------------------------------------------------------------------
// IEC 60664-1:2020 — clearances to withstand steady-state voltages, temporary overvoltages or
// recurring peak voltages (Table F.7a in the 2007 edition). IEC 62368-1:2018 procedure 1
// (5.4.2.2) dimensions clearance from the peak working voltage in the same way.

/// Source of [`STEADY_STATE_CLEARANCE`].
pub const STEADY_STATE_CLEARANCE_SOURCE: TableSource = TableSource {
    standard: IEC_60664_1,
    table: "clearances for steady-state voltages, temporary overvoltages or recurring peak voltages (Table F.7a in the 2007 edition; table number recalled from memory)",
    provenance: RECALLED,
};

/// Rows of the steady-state clearance table: peak voltage up to and including (kV), then the
/// minimum clearance in mm for case A (inhomogeneous field) and case B (homogeneous field), at
/// pollution degree 1. The pollution-degree minimum clearances (0.2 mm at PD2, 0.8 mm at PD3,
/// [`POLLUTION_MINIMUM_CLEARANCE`]) apply on top. Rows above 50 kV are not in gapwise's data.
pub const STEADY_STATE_CLEARANCE: [(f64, f64, f64); 30] = [
    (0.04, 0.001, 0.001),
    (0.06, 0.002, 0.002),
    (0.1, 0.003, 0.003),
    (0.12, 0.004, 0.004),
    (0.15, 0.005, 0.005),
    (0.2, 0.006, 0.006),
    (0.25, 0.008, 0.008),
    (0.33, 0.01, 0.01),
    (0.4, 0.02, 0.02),
    (0.5, 0.04, 0.04),
    (0.6, 0.06, 0.06),
    (0.8, 0.13, 0.1),
    (1.0, 0.26, 0.15),
    (1.2, 0.42, 0.2),
    (1.5, 0.76, 0.3),
    (2.0, 1.27, 0.45),
    (2.5, 1.8, 0.6),
    (3.0, 2.4, 0.8),
    (4.0, 3.8, 1.2),
    (5.0, 5.7, 1.5),
    (6.0, 7.9, 2.0),
    (8.0, 11.0, 3.0),
    (10.0, 15.2, 3.5),
    (12.0, 19.0, 4.5),
    (15.0, 25.0, 5.5),
    (20.0, 34.0, 8.0),
    (25.0, 44.0, 10.0),
    (30.0, 55.0, 12.5),
    (40.0, 77.0, 17.0),
    (50.0, 100.0, 22.0),
];

/// Source of [`POLLUTION_MINIMUM_CLEARANCE`].
pub const POLLUTION_MINIMUM_SOURCE: TableSource = TableSource {
    standard: IEC_60664_1,
    table: "Table F.2, the pollution-degree minimum clearances",
    provenance: RECALLED,
};

/// Smallest clearance at pollution degree 1, 2, 3 (mm), whatever the voltage: the minimum that
/// Table F.2 carries in its PD2 and PD3 columns. gapwise applies it to the steady-state and
/// high-frequency clearances too (an assumption on the safe side: common practice, no
/// published source).
pub const POLLUTION_MINIMUM_CLEARANCE: [f64; 3] = [0.0, 0.2, 0.8];

// ---------------------------------------------------------------------------------------------
// Working voltages above 30 kHz: IEC 62368-1:2018 takes clearance (5.4.2.2, Table 11) and
// creepage (5.4.3, Table 18) for them from IEC 60664-4:2005 (Tables 1 and 2).

/// The frequency above which the high-frequency tables apply (Hz): IEC 62368-1:2018 5.4.2.2
/// and 5.4.3, IEC 60664-4:2005 scope (value recalled from memory). Exactly 30 kHz is
/// low-frequency.
pub const HIGH_FREQUENCY_LIMIT_HZ: f64 = 30e3;

/// The IEC standard on insulation coordination for high-frequency voltage stress.
pub const IEC_60664_4: &str = "IEC 60664-4:2005";

/// Source of [`HIGH_FREQUENCY_CLEARANCE`].
pub const HIGH_FREQUENCY_CLEARANCE_SOURCE: TableSource = TableSource {
    standard: IEC_62368_1,
    table: "5.4.2.2, Table 11, clearances for working voltages above 30 kHz (from IEC 60664-4:2005 Table 1)",
    provenance: RECALLED,
};

/// Rows of the high-frequency clearance table, inhomogeneous field: peak working voltage up to
/// and including (kV), basic or supplementary clearance (mm). Reinforced is twice basic. Where
/// the authors' recollections of a value differed, the larger was typed. Rows above 1.0 kV are
/// not in gapwise's data (a 5–75 W flyback barrier stays well below).
pub const HIGH_FREQUENCY_CLEARANCE: [(f64, f64); 3] = [(0.6, 0.07), (0.8, 0.25), (1.0, 0.7)];

/// The highest frequency IEC 60664-4:2005 covers (Hz; value recalled from memory).
pub const HIGH_FREQUENCY_UP_TO_HZ: f64 = 10e6;

/// Source of [`HIGH_FREQUENCY_CREEPAGE`] and [`HIGH_FREQUENCY_CREEPAGE_POLLUTION_FACTOR`].
pub const HIGH_FREQUENCY_CREEPAGE_SOURCE: TableSource = TableSource {
    standard: IEC_62368_1,
    table: "5.4.3, Table 18, creepage for working voltages above 30 kHz (from IEC 60664-4:2005 Table 2), 30 kHz < f ≤ 100 kHz column",
    provenance: RECALLED,
};

/// The highest frequency of the high-frequency creepage column gapwise carries (Hz); the
/// columns for higher frequencies are not in gapwise's data.
pub const HIGH_FREQUENCY_CREEPAGE_UP_TO_HZ: f64 = 100e3;

/// Rows of the high-frequency creepage table, 30 kHz < f ≤ 100 kHz, pollution degree 1: peak
/// working voltage up to and including (kV), basic creepage (mm), independent of the material
/// group. Reinforced is twice basic. Rows above 1.0 kV are not in gapwise's data.
pub const HIGH_FREQUENCY_CREEPAGE: [(f64, f64); 10] = [
    (0.1, 0.0167),
    (0.2, 0.042),
    (0.3, 0.083),
    (0.4, 0.125),
    (0.5, 0.183),
    (0.6, 0.267),
    (0.7, 0.358),
    (0.8, 0.45),
    (0.9, 0.525),
    (1.0, 0.6),
];

/// Multiplier of the high-frequency creepage for pollution degree 1, 2, 3.
pub const HIGH_FREQUENCY_CREEPAGE_POLLUTION_FACTOR: [f64; 3] = [1.0, 1.2, 1.4];

// ---------------------------------------------------------------------------------------------
// IEC 62368-1:2018 Table 17 (creepage): interpolation and rounding.

/// Source of [`CREEPAGE_ROUNDING_STEP_MM`].
pub const CREEPAGE_ROUNDING_SOURCE: TableSource = TableSource {
    standard: IEC_62368_1,
    table: "Table 17, note on interpolation",
    provenance: RECALLED,
};

/// An interpolated creepage distance is rounded up to the next multiple of this step (mm).
pub const CREEPAGE_ROUNDING_STEP_MM: f64 = 0.1;

// ---------------------------------------------------------------------------------------------
// IEC 60664-1:2020 Table F.5 (Table F.4 in the 2007 edition) — creepage distances to avoid
// failure due to tracking.

/// Source of [`CREEPAGE`].
pub const CREEPAGE_SOURCE: TableSource = TableSource {
    standard: IEC_60664_1,
    table: "Table F.5 (Table F.4 in the 2007 edition)",
    provenance: RECALLED,
};

/// Rows of Table F.5: RMS working voltage (V), then creepage in mm for
/// `[printed wiring PD1 (all groups), printed wiring PD2 (all groups except IIIb),
///   PD1 (all groups), PD2 group I, PD2 group II, PD2 group III,
///   PD3 group I, PD3 group II, PD3 group III]`.
/// Linear interpolation between rows is permitted by the table's note. Rows above 1000 V are
/// not in gapwise's data.
pub const CREEPAGE: [(f64, [f64; 9]); 21] = [
    (10.0, [0.025, 0.04, 0.08, 0.4, 0.4, 0.4, 1.0, 1.0, 1.0]),
    (
        12.5,
        [0.025, 0.04, 0.09, 0.42, 0.42, 0.42, 1.05, 1.05, 1.05],
    ),
    (16.0, [0.025, 0.04, 0.1, 0.45, 0.45, 0.45, 1.1, 1.1, 1.1]),
    (20.0, [0.025, 0.04, 0.11, 0.48, 0.48, 0.48, 1.2, 1.2, 1.2]),
    (25.0, [0.025, 0.04, 0.125, 0.5, 0.5, 0.5, 1.25, 1.25, 1.25]),
    (32.0, [0.025, 0.04, 0.14, 0.53, 0.53, 0.53, 1.3, 1.3, 1.3]),
    (40.0, [0.025, 0.04, 0.16, 0.56, 0.8, 1.1, 1.4, 1.6, 1.8]),
    (50.0, [0.025, 0.04, 0.18, 0.6, 0.85, 1.2, 1.5, 1.7, 1.9]),
    (63.0, [0.04, 0.063, 0.2, 0.63, 0.9, 1.25, 1.6, 1.8, 2.0]),
    (80.0, [0.063, 0.1, 0.22, 0.67, 0.95, 1.3, 1.7, 1.9, 2.1]),
    (100.0, [0.1, 0.16, 0.25, 0.71, 1.0, 1.4, 1.8, 2.0, 2.2]),
    (125.0, [0.16, 0.25, 0.28, 0.75, 1.05, 1.5, 1.9, 2.1, 2.4]),
    (160.0, [0.25, 0.4, 0.32, 0.8, 1.1, 1.6, 2.0, 2.2, 2.5]),
    (200.0, [0.4, 0.63, 0.42, 1.0, 1.4, 2.0, 2.5, 2.8, 3.2]),
    (250.0, [0.56, 1.0, 0.56, 1.25, 1.8, 2.5, 3.2, 3.6, 4.0]),
    (320.0, [0.75, 1.6, 0.75, 1.6, 2.2, 3.2, 4.0, 4.5, 5.0]),
    (400.0, [1.0, 2.0, 1.0, 2.0, 2.8, 4.0, 5.0, 5.6, 6.3]),
    (500.0, [1.3, 2.5, 1.3, 2.5, 3.6, 5.0, 6.3, 7.1, 8.0]),
    (630.0, [1.8, 3.2, 1.8, 3.2, 4.5, 6.3, 8.0, 9.0, 10.0]),
    (800.0, [2.4, 4.0, 2.4, 4.0, 5.6, 8.0, 10.0, 11.0, 12.5]),
    (1000.0, [3.2, 5.0, 3.2, 5.0, 7.1, 10.0, 12.5, 14.0, 16.0]),
];

// ---------------------------------------------------------------------------------------------
// IEC 60664-1:2020 Table A.2 — altitude correction factors for clearances.

/// Source of [`ALTITUDE`].
pub const ALTITUDE_SOURCE: TableSource = TableSource {
    standard: IEC_60664_1,
    table: "Table A.2",
    provenance: RECALLED,
};

/// Rows of Table A.2: altitude (m), normal barometric pressure (kPa), multiplication factor
/// for clearances. Up to 2000 m the factor is 1; gapwise adds the sea-level row (0 m) with
/// factor 1 so that the range starts at sea level. Rows above 10 000 m are not in the data.
pub const ALTITUDE: [(f64, f64, f64); 10] = [
    (0.0, 101.3, 1.00),
    (2000.0, 80.0, 1.00),
    (3000.0, 70.0, 1.14),
    (4000.0, 62.0, 1.29),
    (5000.0, 54.0, 1.48),
    (6000.0, 47.0, 1.70),
    (7000.0, 41.0, 1.95),
    (8000.0, 35.5, 2.25),
    (9000.0, 30.5, 2.62),
    (10000.0, 26.5, 3.02),
];

// ---------------------------------------------------------------------------------------------
// IEC 60664-1:2020 4.8.1.3 (material groups by comparative tracking index).

/// Source of [`MATERIAL_GROUPS`].
pub const MATERIAL_GROUP_SOURCE: TableSource = TableSource {
    standard: IEC_60664_1,
    table: "4.8.1.3, material groups by CTI (IEC 60112)",
    provenance: RECALLED,
};

/// Material groups by the lowest comparative tracking index they accept: (name, CTI at least).
/// Below CTI 100 a material is outside every group.
pub const MATERIAL_GROUPS: [(&str, f64); 4] = [
    ("I", 600.0),
    ("II", 400.0),
    ("IIIa", 175.0),
    ("IIIb", 100.0),
];

// ---------------------------------------------------------------------------------------------
// IEC 60664-1:2020 6.8 (6.2 in the 2007 edition) — minimum width of a groove.

/// Source of [`GROOVE_WIDTH`].
pub const GROOVE_SOURCE: TableSource = TableSource {
    standard: IEC_60664_1,
    table: "6.8, minimum width of grooves",
    provenance: RECALLED,
};

/// Minimum groove width X in mm for pollution degree 1, 2, 3. Where the associated clearance is
/// below 3 mm, X may be reduced to one third of that clearance.
pub const GROOVE_WIDTH: [f64; 3] = [0.25, 1.0, 1.5];
/// The clearance below which the groove width may be one third of it (mm).
pub const GROOVE_REDUCTION_BELOW_CLEARANCE: f64 = 3.0;

// ---------------------------------------------------------------------------------------------
// IEC 62368-1:2018 — electric strength tests, solid and thin-sheet insulation, touch current,
// capacitor discharge.

/// Source of [`TEST_VOLTAGE_TRANSIENT`].
pub const TEST_VOLTAGE_TRANSIENT_SOURCE: TableSource = TableSource {
    standard: IEC_62368_1,
    table: "5.4.9.1, test voltages based on transient voltages (Table 25)",
    provenance: RECALLED,
};

/// Test voltage from the required withstand (transient) voltage: (required withstand voltage up
/// to and including, kV peak; basic or supplementary test voltage, kV peak or DC; reinforced
/// test voltage, kV peak or DC).
pub const TEST_VOLTAGE_TRANSIENT: [(f64, f64, f64); 8] = [
    (0.33, 0.33, 0.5),
    (0.5, 0.5, 0.8),
    (0.8, 0.8, 1.5),
    (1.5, 1.5, 2.5),
    (2.5, 2.5, 4.0),
    (4.0, 4.0, 6.0),
    (6.0, 6.0, 8.0),
    (8.0, 8.0, 12.0),
];

/// Source of [`TEST_VOLTAGE_TEMPORARY`].
pub const TEST_VOLTAGE_TEMPORARY_SOURCE: TableSource = TableSource {
    standard: IEC_62368_1,
    table: "5.4.9.1, test voltages based on temporary overvoltages (Table 27)",
    provenance: RECALLED,
};

/// Test voltage from temporary overvoltages of the mains: (nominal mains voltage up to and
/// including, V RMS; basic or supplementary, kV peak; reinforced, kV peak).
pub const TEST_VOLTAGE_TEMPORARY: [(f64, f64, f64); 2] = [(250.0, 2.0, 4.0), (600.0, 2.5, 5.0)];

/// Source of the solid-insulation and thin-sheet rules.
pub const SOLID_INSULATION_SOURCE: TableSource = TableSource {
    standard: IEC_62368_1,
    table: "5.4.4.2 (distance through insulation) and 5.4.4.6 (thin sheet material)",
    provenance: RECALLED,
};

/// Minimum distance through solid supplementary or reinforced insulation (mm) when the peak
/// working voltage exceeds [`SOLID_INSULATION_ABOVE_PEAK`].
pub const SOLID_INSULATION_MINIMUM: f64 = 0.4;
/// The peak working voltage (V) above which [`SOLID_INSULATION_MINIMUM`] applies.
pub const SOLID_INSULATION_ABOVE_PEAK: f64 = 71.0;

/// Thin-sheet layers (each thinner than [`SOLID_INSULATION_MINIMUM`]) by grade:
/// (layers when each layer alone passes the grade's electric strength test, layers when any two
/// together pass it). Basic, supplementary, reinforced.
pub const THIN_SHEET_LAYERS: [(i64, i64); 3] = [(1, 1), (2, 3), (2, 3)];

/// Source of [`TOUCH_CURRENT_ES1`].
pub const TOUCH_CURRENT_SOURCE: TableSource = TableSource {
    standard: IEC_62368_1,
    table: "5.2.2.2, electrical energy source ES1 current limit (Table 4)",
    provenance: RECALLED,
};
/// ES1 touch-current limit for accessible parts of class II equipment (A RMS, up to 1 kHz).
pub const TOUCH_CURRENT_ES1: f64 = 0.5e-3;

/// Source of the capacitor-discharge rule.
pub const DISCHARGE_SOURCE: TableSource = TableSource {
    standard: IEC_62368_1,
    table: "5.5.2.2, capacitor discharge after disconnection of a connector",
    provenance: RECALLED,
};
/// ES1 DC voltage limit that the plug pins must reach after disconnection (V).
pub const DISCHARGE_VOLTAGE_LIMIT: f64 = 60.0;
/// Time after disconnection within which the plug pins must be at or below the limit, for
/// equipment whose plug an ordinary person handles (s).
pub const DISCHARGE_TIME: f64 = 2.0;

// ---------------------------------------------------------------------------------------------
// IEC 60384-14 — safety capacitor subclasses.

/// Source of [`SAFETY_CAPACITOR_CLASSES`].
pub const CAPACITOR_CLASS_SOURCE: TableSource = TableSource {
    standard: "IEC 60384-14:2013",
    table: "Tables 1 and 2, X and Y subclasses",
    provenance: RECALLED,
};

/// A subclass of safety capacitor.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CapacitorClassRow {
    /// `X1`, `X2`, `X3`, `Y1` … `Y4`.
    pub name: &'static str,
    /// Peak impulse voltage in service the subclass is meant for (V peak), as text of a range.
    pub service_impulse: &'static str,
    /// Impulse test voltage before endurance (V peak); 0 where the subclass has no impulse test.
    pub impulse_test_voltage: f64,
    /// Highest rated AC voltage (V RMS) of the subclass; 0 where the standard sets none.
    pub rated_voltage_max: f64,
    /// Which insulation the subclass may bridge.
    pub bridges: &'static str,
}

/// X and Y subclasses.
pub const SAFETY_CAPACITOR_CLASSES: [CapacitorClassRow; 7] = [
    CapacitorClassRow {
        name: "X1",
        service_impulse: "above 2.5 kV, up to 4.0 kV",
        impulse_test_voltage: 4000.0,
        rated_voltage_max: 0.0,
        bridges:
            "line to line or line to neutral only (no insulation to earth or to touchable parts)",
    },
    CapacitorClassRow {
        name: "X2",
        service_impulse: "up to 2.5 kV",
        impulse_test_voltage: 2500.0,
        rated_voltage_max: 0.0,
        bridges:
            "line to line or line to neutral only (no insulation to earth or to touchable parts)",
    },
    CapacitorClassRow {
        name: "X3",
        service_impulse: "up to 1.2 kV",
        impulse_test_voltage: 0.0,
        rated_voltage_max: 0.0,
        bridges:
            "line to line or line to neutral only (no insulation to earth or to touchable parts)",
    },
    CapacitorClassRow {
        name: "Y1",
        service_impulse: "for double or reinforced insulation",
        impulse_test_voltage: 8000.0,
        rated_voltage_max: 500.0,
        bridges: "double or reinforced insulation (one capacitor), or basic or supplementary",
    },
    CapacitorClassRow {
        name: "Y2",
        service_impulse: "for basic or supplementary insulation",
        impulse_test_voltage: 5000.0,
        rated_voltage_max: 300.0,
        bridges: "basic or supplementary insulation; reinforced only as two in series",
    },
    CapacitorClassRow {
        name: "Y3",
        service_impulse: "for basic or supplementary insulation",
        impulse_test_voltage: 0.0,
        rated_voltage_max: 250.0,
        bridges: "basic or supplementary insulation",
    },
    CapacitorClassRow {
        name: "Y4",
        service_impulse: "for basic or supplementary insulation",
        impulse_test_voltage: 2500.0,
        rated_voltage_max: 150.0,
        bridges: "basic or supplementary insulation",
    },
];

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tables_are_sorted_and_never_decrease() {
        assert!(RATED_IMPULSE
            .windows(2)
            .all(|w| w[0].0 < w[1].0 && (0..4).all(|i| w[0].1[i] <= w[1].1[i])));
        assert!(CLEARANCE
            .windows(2)
            .all(|w| w[0].0 < w[1].0
                && (0..3).all(|i| w[0].1[i] <= w[1].1[i] && w[0].2[i] <= w[1].2[i])));
        assert!(CREEPAGE
            .windows(2)
            .all(|w| w[0].0 < w[1].0 && (0..9).all(|i| w[0].1[i] <= w[1].1[i])));
        assert!(ALTITUDE
            .windows(2)
            .all(|w| w[0].0 < w[1].0 && w[0].2 <= w[1].2 && w[0].1 > w[1].1));
        assert!(PREFERRED_IMPULSE.windows(2).all(|w| w[0] < w[1]));
    }

    #[test]
    fn clearance_columns_never_decrease_with_pollution_field_or_category() {
        for (_, a, b) in CLEARANCE {
            // PD1 ≤ PD2 ≤ PD3 in both field cases; homogeneous ≤ inhomogeneous
            assert!(a[0] <= a[1] && a[1] <= a[2] && b[0] <= b[1] && b[1] <= b[2]);
            assert!((0..3).all(|i| b[i] <= a[i]));
        }
        assert!(STEADY_STATE_CLEARANCE
            .windows(2)
            .all(|w| w[0].0 < w[1].0 && w[0].1 <= w[1].1 && w[0].2 <= w[1].2));
        assert!(STEADY_STATE_CLEARANCE.iter().all(|r| r.2 <= r.1));
        for (_, r) in RATED_IMPULSE {
            assert!(r.windows(2).all(|w| w[0] < w[1]));
        }
        assert!(HIGH_FREQUENCY_CLEARANCE
            .windows(2)
            .all(|w| w[0].0 < w[1].0 && w[0].1 <= w[1].1));
        assert!(HIGH_FREQUENCY_CREEPAGE
            .windows(2)
            .all(|w| w[0].0 < w[1].0 && w[0].1 <= w[1].1));
        assert!(HIGH_FREQUENCY_CREEPAGE_POLLUTION_FACTOR
            .windows(2)
            .all(|w| w[0] <= w[1]));
        assert!(TEST_VOLTAGE_TRANSIENT
            .windows(2)
            .all(|w| w[0].0 < w[1].0 && w[0].1 <= w[1].1 && w[0].2 <= w[1].2));
        assert!(TEST_VOLTAGE_TRANSIENT.iter().all(|r| r.1 <= r.2));
        assert!(GROOVE_WIDTH.windows(2).all(|w| w[0] <= w[1]));
        assert!(POLLUTION_MINIMUM_CLEARANCE.windows(2).all(|w| w[0] <= w[1]));
    }

    #[test]
    fn creepage_columns_never_decrease_with_pollution_or_group() {
        for (_, r) in CREEPAGE {
            // PD1 ≤ PD2 group I ≤ II ≤ III ≤ PD3 group III; PD2 group x ≤ PD3 group x
            assert!(r[2] <= r[3] && r[3] <= r[4] && r[4] <= r[5]);
            assert!(r[6] <= r[7] && r[7] <= r[8]);
            assert!(r[3] <= r[6] && r[4] <= r[7] && r[5] <= r[8]);
            assert!(r[0] <= r[1]);
        }
    }
}

//! The output divider on a programmable shunt reference: the output a divider sets (with the
//! reference-input current), the best pair from a preferred series, an optional trim resistor,
//! and the output's worst-case and root-sum-square range from the tolerances.

use crate::error::{Error, Result};
use crate::passives::e_series::{
    at_or_above_value, at_or_below_value, nearest_value, values_between,
};
use crate::passives::ESeries;
use crate::report::{Field, Record};
use crate::units::validate::{non_negative, number_within, positive};
use crate::units::{
    si, ElectricCurrent, ElectricPotential, ElectricalResistance, Power, Quantity, TypedQuantity,
};

/// A programmable shunt reference, described by its parameters (no part).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ShuntReference {
    /// Reference voltage at the reference input (regulating).
    pub reference_voltage: ElectricPotential,
    /// Relative tolerance of the reference voltage over temperature (0.01 = ±1 %).
    pub reference_tolerance: f64,
    /// Current the reference input draws from the divider tap.
    pub reference_input_current: ElectricCurrent,
    /// Smallest cathode current at which the reference regulates.
    pub minimum_cathode_current: ElectricCurrent,
    /// Smallest cathode-anode voltage at which the reference regulates.
    pub minimum_cathode_voltage: ElectricPotential,
}

impl ShuntReference {
    /// A generic 2.5 V programmable shunt reference: ±1 %, 2 µA into the reference input,
    /// regulating from 1 mA and from a cathode voltage of 2.5 V (common practice, no
    /// published source; take the values of the part you use).
    pub fn generic_2v5() -> Self {
        Self {
            reference_voltage: si(2.5),
            reference_tolerance: 0.01,
            reference_input_current: si(2e-6),
            minimum_cathode_current: si(1e-3),
            minimum_cathode_voltage: si(2.5),
        }
    }

    /// Checks every field, naming it and its unit.
    pub fn validate(&self) -> Result<()> {
        positive("reference_voltage", self.reference_voltage)?;
        number_within("reference_tolerance", self.reference_tolerance, 0.0, 0.2)?;
        non_negative("reference_input_current", self.reference_input_current)?;
        positive("minimum_cathode_current", self.minimum_cathode_current)?;
        non_negative("minimum_cathode_voltage", self.minimum_cathode_voltage)?;
        Ok(())
    }
}

/// Which divider resistor a trim resistor sits in parallel with.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TrimPosition {
    /// In parallel with the upper resistor (output to tap): lowers the output.
    Upper,
    /// In parallel with the lower resistor (tap to ground): raises the output.
    Lower,
}

impl TrimPosition {
    /// `upper` or `lower`.
    pub fn as_str(self) -> &'static str {
        match self {
            TrimPosition::Upper => "upper",
            TrimPosition::Lower => "lower",
        }
    }
}

/// A trim resistor across one of the divider resistors.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Trim {
    /// Which resistor it is across.
    pub position: TrimPosition,
    /// Its value.
    pub resistor: ElectricalResistance,
}

/// Largest trim resistor, as a multiple of the resistor it parallels (common practice, no
/// published source).
pub const MAX_TRIM_RATIO: f64 = 1000.0;

fn parallel(a: f64, b: f64) -> f64 {
    a * b / (a + b)
}

/// V_out = V_ref·(1 + R_t/R_b) + I_ref·R_t on SI numbers.
fn output_si(vref: f64, iref: f64, rt: f64, rb: f64) -> f64 {
    vref * (1.0 + rt / rb) + iref * rt
}

fn effective(rt: f64, rb: f64, trim: Option<(TrimPosition, f64)>) -> (f64, f64) {
    match trim {
        Some((TrimPosition::Upper, r)) => (parallel(rt, r), rb),
        Some((TrimPosition::Lower, r)) => (rt, parallel(rb, r)),
        None => (rt, rb),
    }
}

/// The output voltage a divider sets on a shunt reference.
///
/// Formula: V_out = V_ref·(1 + R_t/R_b) + I_ref·R_t, with R_t the upper (output to tap) and
/// R_b the lower (tap to ground) resistor, each paralleled by the trim resistor where it sits;
/// I_ref is the reference-input current, which flows through R_t.
/// Assumes the loop regulates (the tap at V_ref). Valid for positive, finite resistors.
/// Reference: the divider with a reference-input current, Basso, *Designing Control Loops for
/// Linear and Switching Power Supplies* (2012), chapter on the shunt regulator.
pub fn divider_output_voltage(
    upper_resistor: ElectricalResistance,
    lower_resistor: ElectricalResistance,
    trim: Option<Trim>,
    reference: &ShuntReference,
) -> Result<ElectricPotential> {
    reference.validate()?;
    let rt = positive("upper_resistor", upper_resistor)?.value;
    let rb = positive("lower_resistor", lower_resistor)?.value;
    let trim = match trim {
        Some(t) => Some((t.position, positive("trim_resistor", t.resistor)?.value)),
        None => None,
    };
    let (rt, rb) = effective(rt, rb, trim);
    Ok(si(output_si(
        reference.reference_voltage.value,
        reference.reference_input_current.value,
        rt,
        rb,
    )))
}

/// What the output divider must do.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct OutputDividerSpec {
    /// The output voltage to regulate.
    pub output_voltage: ElectricPotential,
    /// The shunt reference.
    pub reference: ShuntReference,
    /// Wanted current in the lower resistor (sets the resistance level; the search looks
    /// within a factor of two of V_ref / I).
    pub divider_current: ElectricCurrent,
    /// Series of both resistors (and of the trim resistor).
    pub series: ESeries,
    /// Relative tolerance of every resistor (0.01 = ±1 %).
    pub resistor_tolerance: f64,
    /// Add a trim resistor when it brings the output closer to the target.
    pub trim: bool,
}

impl OutputDividerSpec {
    /// 250 µA in the lower resistor, E96 resistors of ±1 %, trim allowed.
    pub fn new(output_voltage: ElectricPotential, reference: ShuntReference) -> Self {
        Self {
            output_voltage,
            reference,
            divider_current: si(250e-6),
            series: ESeries::E96,
            resistor_tolerance: 0.01,
            trim: true,
        }
    }
}

/// An output divider from preferred values, with its tolerance range.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct OutputDivider {
    /// Wanted output.
    pub target_voltage: ElectricPotential,
    /// Upper resistor (output to tap).
    pub upper_resistor: ElectricalResistance,
    /// Lower resistor (tap to ground).
    pub lower_resistor: ElectricalResistance,
    /// Output of the pair alone at nominal values.
    pub pair_output_voltage: ElectricPotential,
    /// The trim resistor, if one helps.
    pub trim: Option<Trim>,
    /// Output at nominal values (with the trim resistor).
    pub output_voltage: ElectricPotential,
    /// (output − target)/target.
    pub output_error: f64,
    /// Lowest output with every tolerance at its worst end (extreme value).
    pub output_voltage_min: ElectricPotential,
    /// Highest output with every tolerance at its worst end.
    pub output_voltage_max: ElectricPotential,
    /// Root-sum-square of the output deviations from each tolerance alone.
    pub output_voltage_rss_deviation: ElectricPotential,
    /// Current in the lower resistor (V_ref / R_b,eff).
    pub divider_current: ElectricCurrent,
    /// Dissipation of the whole divider, V_out·(I_div + I_ref) − V_ref·I_ref.
    pub divider_power: Power,
}

/// The highest output voltage [`output_divider`] designs for (V): far above any output of a
/// 5–75 W supply, low enough that every tolerance stack stays finite.
pub const MAX_DIVIDER_OUTPUT_VOLTAGE: f64 = 10_000.0;

/// Chooses the output divider from a preferred series, with an optional trim resistor, and
/// works out its tolerance range.
///
/// Method: (1) each lower resistor R_b of the series within a factor of two of
/// V_ref / I_div is tried with the upper resistor nearest to the ideal
/// R_t = (V_out − V_ref)·R_b/(V_ref + I_ref·R_b); the pair with the smallest output error wins
/// (ties: the current nearest the wish). (2) With `trim`, a third resistor is put across the
/// upper resistor when the pair is high (or across the lower one when it is low), its value the
/// preferred value at, above or below the ideal R_p = 1/(1/R_eff − 1/R) that lands closest;
/// it is kept only when it brings the output closer, and only up to [`MAX_TRIM_RATIO`] times
/// its partner and 10 MΩ. (3) Extreme values: V_out over every
/// combination of V_ref·(1 ± t_ref) and each resistor·(1 ± t_R); root-sum-square:
/// √Σ ΔV_i², ΔV_i = |V(p_i·(1 + t_i)) − V(p_i·(1 − t_i))|/2 for each tolerance alone.
/// The reference-input current is taken at its given value (not toleranced).
/// Valid for V_out > V_ref > 0. Errors name `output_voltage`, `reference_voltage`,
/// `divider_current`, `resistor_tolerance`; an `output_voltage` above
/// [`MAX_DIVIDER_OUTPUT_VOLTAGE`] is out of range.
/// Reference: divider equation as in [`divider_output_voltage`]; extreme-value and
/// root-sum-square tolerance stacks are common practice, no published source.
pub fn output_divider(spec: &OutputDividerSpec) -> Result<OutputDivider> {
    spec.reference.validate()?;
    let target = positive("output_voltage", spec.output_voltage)?.value;
    if target > MAX_DIVIDER_OUTPUT_VOLTAGE {
        return Err(Error::out_of_range(format!(
            "`output_voltage` {} is above {} V, outside what a shunt-reference divider of a small supply sets",
            Quantity::from_typed(spec.output_voltage),
            MAX_DIVIDER_OUTPUT_VOLTAGE
        )));
    }
    let vref = spec.reference.reference_voltage.value;
    let iref = spec.reference.reference_input_current.value;
    let idiv = positive("divider_current", spec.divider_current)?.value;
    let tol = number_within("resistor_tolerance", spec.resistor_tolerance, 0.0, 0.2)?;
    if target <= vref * (1.0 + 1e-9) {
        return Err(Error::invalid(format!(
            "`reference_voltage` ({}) must be below `output_voltage` ({})",
            Quantity::from_typed(spec.reference.reference_voltage),
            Quantity::from_typed(spec.output_voltage)
        )));
    }
    let level = vref / idiv;
    let lows = values_between(level / 2.0, level * 2.0, spec.series)?;
    let mut best: Option<(f64, f64, f64, f64)> = None;
    for rb in lows {
        let ideal = (target - vref) * rb / (vref + iref * rb);
        let rt = nearest_value(ideal, spec.series)?;
        let err = ((output_si(vref, iref, rt, rb) - target) / target).abs();
        let dist = (rb / level).ln().abs();
        let better = match best {
            None => true,
            Some((e, d, _, _)) => err < e - 1e-12 || ((err - e).abs() <= 1e-12 && dist < d),
        };
        if better {
            best = Some((err, dist, rt, rb));
        }
    }
    let (pair_err, _, rt, rb) = best.ok_or_else(|| {
        Error::infeasible("no preferred lower resistor near V_ref / `divider_current`")
    })?;
    let v_pair = output_si(vref, iref, rt, rb);
    let mut trim = None;
    if spec.trim && pair_err > 1e-9 {
        trim = best_trim(target, vref, iref, rt, rb, spec.series)?
            .filter(|&(_, _, err)| err < pair_err)
            .map(|(p, r, _)| (p, r));
    }
    let (rt_eff, rb_eff) = effective(rt, rb, trim);
    let v = output_si(vref, iref, rt_eff, rb_eff);
    let range = range_si(&spec.reference, rt, rb, trim, tol);
    let i_low = vref / rb_eff;
    Ok(OutputDivider {
        target_voltage: spec.output_voltage,
        upper_resistor: si(rt),
        lower_resistor: si(rb),
        pair_output_voltage: si(v_pair),
        trim: trim.map(|(position, r)| Trim {
            position,
            resistor: si(r),
        }),
        output_voltage: si(v),
        output_error: (v - target) / target,
        output_voltage_min: range.min,
        output_voltage_max: range.max,
        output_voltage_rss_deviation: range.rss_deviation,
        divider_current: si(i_low),
        divider_power: si(v * (i_low + iref) - vref * iref),
    })
}

/// The output range of a divider from its tolerances.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DividerRange {
    /// Output at nominal values.
    pub nominal: ElectricPotential,
    /// Lowest output, every tolerance at its worst end (extreme value).
    pub min: ElectricPotential,
    /// Highest output.
    pub max: ElectricPotential,
    /// Root-sum-square of the deviations from each tolerance alone.
    pub rss_deviation: ElectricPotential,
}

fn range_si(
    reference: &ShuntReference,
    rt: f64,
    rb: f64,
    trim: Option<(TrimPosition, f64)>,
    tol: f64,
) -> DividerRange {
    let vref = reference.reference_voltage.value;
    let iref = reference.reference_input_current.value;
    let tref = reference.reference_tolerance;
    let eval = |k: [f64; 4]| -> f64 {
        let t = trim.map(|(p, r)| (p, r * (1.0 + k[3] * tol)));
        let (a, b) = effective(rt * (1.0 + k[1] * tol), rb * (1.0 + k[2] * tol), t);
        output_si(vref * (1.0 + k[0] * tref), iref, a, b)
    };
    let n = if trim.is_some() { 4 } else { 3 };
    let (mut vmin, mut vmax) = (f64::INFINITY, f64::NEG_INFINITY);
    for mask in 0..(1u32 << n) {
        let mut k = [0.0; 4];
        for (i, ki) in k.iter_mut().enumerate().take(n) {
            *ki = if mask & (1 << i) != 0 { 1.0 } else { -1.0 };
        }
        let x = eval(k);
        vmin = vmin.min(x);
        vmax = vmax.max(x);
    }
    let mut sum = 0.0;
    for i in 0..n {
        let mut hi = [0.0; 4];
        let mut lo = [0.0; 4];
        hi[i] = 1.0;
        lo[i] = -1.0;
        let d = (eval(hi) - eval(lo)) / 2.0;
        sum += d * d;
    }
    DividerRange {
        nominal: si(eval([0.0; 4])),
        min: si(vmin),
        max: si(vmax),
        rss_deviation: si(sum.sqrt()),
    }
}

/// The output range of a given divider from the reference's and the resistors' tolerances.
///
/// Formulas as in [`output_divider`] step (3): extreme values over every combination of
/// V_ref·(1 ± t_ref) and each resistor·(1 ± t_R); root-sum-square √Σ ΔV_i² with
/// ΔV_i = |V(p_i·(1 + t_i)) − V(p_i·(1 − t_i))|/2. The reference-input current is not
/// toleranced. Reference: common practice, no published source.
pub fn divider_output_range(
    upper_resistor: ElectricalResistance,
    lower_resistor: ElectricalResistance,
    trim: Option<Trim>,
    reference: &ShuntReference,
    resistor_tolerance: f64,
) -> Result<DividerRange> {
    reference.validate()?;
    let rt = positive("upper_resistor", upper_resistor)?.value;
    let rb = positive("lower_resistor", lower_resistor)?.value;
    let tol = number_within("resistor_tolerance", resistor_tolerance, 0.0, 0.2)?;
    let trim = match trim {
        Some(t) => Some((t.position, positive("trim_resistor", t.resistor)?.value)),
        None => None,
    };
    Ok(range_si(reference, rt, rb, trim, tol))
}

/// The trim resistor (position, value, |error|) that lands closest, if any is meaningful.
fn best_trim(
    target: f64,
    vref: f64,
    iref: f64,
    rt: f64,
    rb: f64,
    series: ESeries,
) -> Result<Option<(TrimPosition, f64, f64)>> {
    let v = output_si(vref, iref, rt, rb);
    let (position, ideal) = if v > target {
        // lower R_t: R_t,eff = (V − V_ref)/(V_ref/R_b + I_ref)
        let want = (target - vref) / (vref / rb + iref);
        (TrimPosition::Upper, 1.0 / (1.0 / want - 1.0 / rt))
    } else {
        // lower R_b: R_b,eff = V_ref·R_t/(V − V_ref − I_ref·R_t)
        let head = target - vref - iref * rt;
        if head <= 0.0 {
            return Ok(None);
        }
        let want = vref * rt / head;
        (TrimPosition::Lower, 1.0 / (1.0 / want - 1.0 / rb))
    };
    // a trim more than a thousand times its partner moves the output by less than 0.1 %, which
    // the resistors' own tolerance swamps; above 10 MΩ board leakage takes over
    let partner = if position == TrimPosition::Upper {
        rt
    } else {
        rb
    };
    if !(ideal.is_finite() && ideal > 0.0 && ideal <= MAX_TRIM_RATIO * partner && ideal <= 10e6) {
        return Ok(None);
    }
    let mut out: Option<(TrimPosition, f64, f64)> = None;
    for r in [
        nearest_value(ideal, series)?,
        at_or_above_value(ideal, series)?,
        at_or_below_value(ideal, series)?,
    ] {
        let (a, b) = effective(rt, rb, Some((position, r)));
        let err = ((output_si(vref, iref, a, b) - target) / target).abs();
        if out.is_none_or(|(_, _, e)| err < e) {
            out = Some((position, r, err));
        }
    }
    Ok(out)
}

impl Record for OutputDivider {
    fn fields(&self) -> Vec<Field> {
        let mut v = vec![
            Field::quantity("target_voltage", self.target_voltage),
            Field::quantity("upper_resistor", self.upper_resistor),
            Field::quantity("lower_resistor", self.lower_resistor),
            Field::quantity("pair_output_voltage", self.pair_output_voltage),
        ];
        match self.trim {
            Some(t) => {
                v.push(Field::new("trim_position", t.position.as_str()));
                v.push(Field::quantity("trim_resistor", t.resistor));
            }
            None => v.push(Field::new("trim_position", "none")),
        }
        v.extend([
            Field::quantity("output_voltage", self.output_voltage),
            Field::new("output_error", self.output_error),
            Field::quantity("output_voltage_min", self.output_voltage_min),
            Field::quantity("output_voltage_max", self.output_voltage_max),
            Field::quantity(
                "output_voltage_rss_deviation",
                self.output_voltage_rss_deviation,
            ),
            Field::quantity("divider_current", self.divider_current),
            Field::quantity("divider_power", self.divider_power),
        ]);
        v
    }
}

/// Shows a typed quantity with its unit (for messages).
pub(crate) fn show<Q: TypedQuantity>(q: Q) -> Quantity {
    Quantity::from_typed(q)
}

//! The whole design: primary inductance and bulk capacitor chosen at low line and full load,
//! current limit, clamp, every corner, overload power across line, bias estimate and rules.

use super::clamp::{design_clamp, ClampDesign, ZenerSpread, CLAMP_CAPACITOR_RIPPLE};
use super::operating_point::{show, Context, OperatingPoint};
use super::output::{post_filter, PostFilter};
use super::rules::flyback_rule_book;
use super::rules::DRAIN_DERATING;
use super::short_circuit::{short_circuit_at, ShortCircuitPoint};
use super::spec::{
    BulkChoice, ClampKind, FlybackSpec, InputRange, Leakage, LightLoadControl, ModeTarget,
    DEFAULT_CLAMP_OVERSHOOT_FRACTION, DEFAULT_VALLEY_FRACTION, MIN_CLAMP_OVERSHOOT_FRACTION,
};
use super::thermal::{junction_temperatures, JunctionTemperature};
use super::waveform::{boundary_duty, boundary_inductance_si, ConductionMode};
use crate::error::{Error, ErrorKind, Result};
use crate::mains::{bulk_capacitance_for_valley, hold_up_time};
use crate::numeric::{brent, Sample, Tolerance};
use crate::passives::e_series::at_or_above_value;
use crate::passives::ESeries;
use crate::report::{Field, Record, Table};
use crate::rules::{worst_status, CheckResult, RuleBook, Status};
use crate::units::{
    si, Capacitance, Dimension, ElectricCurrent, ElectricPotential, Frequency, Inductance, Power,
    Quantity, Time,
};
use std::f64::consts::SQRT_2;

/// Headroom of the chosen current limit over the peak current at low line, full load, at the
/// low end of its tolerance (common practice, no published source).
pub const CURRENT_LIMIT_HEADROOM: f64 = 0.1;
/// The load of the no-load points as a fraction of full load: what the feedback network and a
/// small pre-load draw (common practice, no published source).
pub const NO_LOAD_FRACTION: f64 = 1e-3;
/// Change of a rectifier's forward drop per e-fold of its current, used by the bias estimate
/// (common practice, no published source).
pub const RECTIFIER_DROP_PER_EFOLD: f64 = 0.05;

/// Output power when the primary current reaches the current limit, or the duty cycle the
/// controller's maximum, whichever comes at the lower load.
///
/// Formula: the load k at which I_pk(k) = I_lim + V_valley·t_d/L (the sense-delay overshoot at
/// the primary slope V/L), or D(k) = D_max if that is lower, by Brent's method on k; power k·P_out.
/// Assumes a fixed-frequency peak-current-mode controller and outputs that stay in regulation
/// up to that load. Reference: common practice, no published source.
#[derive(Clone, Debug, PartialEq)]
pub struct OverloadPoint {
    /// Line voltage (RMS, or DC bus).
    pub line_voltage: ElectricPotential,
    /// `minimum` or `maximum` end of the current limit's tolerance.
    pub limit_case: &'static str,
    /// The current limit at that end of its tolerance.
    pub current_limit: ElectricCurrent,
    /// Peak current reached, including the overshoot during the sense delay:
    /// I_lim + V_valley·t_d/L.
    pub primary_current_peak: ElectricCurrent,
    /// Output power delivered before the limit trips: the load at which the corner's peak
    /// current equals the limit plus overshoot, found by Brent's method, times full-load power.
    pub output_power: Power,
    /// That power over the full-load output power.
    pub load_fraction: f64,
    /// Conduction mode at the limit.
    pub mode: ConductionMode,
    /// Duty cycle there (at most `max_duty_cycle`).
    pub duty_cycle: f64,
    /// What ends the power: `current_limit`, or `max_duty_cycle` where the controller's duty
    /// limit is reached at a lower load than the current limit (the output then falls out of
    /// regulation before the current limit trips).
    pub limited_by: &'static str,
}

/// Estimate of the bias (controller supply) winding.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BiasEstimate {
    /// Primary to bias turns ratio, N_p/N_b.
    pub turns_ratio: f64,
    /// Bias turns per turn of the regulated output's winding, N_b/N_s.
    pub turns_per_regulated_turn: f64,
    /// Estimated bias voltage at full load.
    pub voltage_full_load: ElectricPotential,
    /// Estimated bias voltage at light load: (V_o + V_f,light)·N_b/N_s − V_f,bias, with the
    /// regulated rectifier's drop lowered by [`RECTIFIER_DROP_PER_EFOLD`] per e-fold of load
    /// (an estimate: leakage-spike peak charging, which raises the bias at heavy load, is not
    /// modelled; common practice, no published source).
    pub voltage_light_load: ElectricPotential,
}

/// A value the specification left open that the design derived from the rest of it.
#[derive(Clone, Debug, PartialEq)]
pub struct DerivedDefault {
    /// The specification key (script name), e.g. `target_valley_voltage`.
    pub key: &'static str,
    /// The value used.
    pub value: Quantity,
    /// How it was derived, with the numbers.
    pub derivation: String,
}

/// A complete flyback power-stage design.
#[derive(Clone, Debug, PartialEq)]
pub struct FlybackDesign {
    /// Full-load output power (loads only).
    pub output_power: Power,
    /// Primary (magnetising) inductance.
    pub primary_inductance: Inductance,
    /// Leakage inductance referred to the primary.
    pub leakage_inductance: Inductance,
    /// Switching frequency.
    pub switching_frequency: Frequency,
    /// Reflected voltage of the regulated output.
    pub reflected_voltage: ElectricPotential,
    /// Nominal current limit.
    pub current_limit: ElectricCurrent,
    /// Relative tolerance of the current limit.
    pub current_limit_tolerance: f64,
    /// Turns ratio N_p/N_s per output, in the order of the spec.
    pub turns_ratios: Vec<f64>,
    /// Turns ratio N_p/N_b of the bias winding.
    pub bias_turns_ratio: Option<f64>,
    /// Bulk capacitance (None for a DC input).
    pub bulk_capacitance: Option<Capacitance>,
    /// Lowest bulk voltage at which the duty limit is still met at full load.
    pub bulk_valley_needed: ElectricPotential,
    /// Hold-up time from the low-line valley at full load down to the end voltage (AC only).
    pub hold_up_time: Option<Time>,
    /// Bulk voltage at which the hold-up time ends.
    pub hold_up_end_voltage: ElectricPotential,
    /// Every corner: four of line and load, then the current limit at low and high line.
    pub corners: Vec<OperatingPoint>,
    /// The clamp, sized at the highest current limit and high line.
    pub clamp: ClampDesign,
    /// Post filter per output (None where there is none).
    pub post_filters: Vec<Option<PostFilter>>,
    /// Output power at the current limit across line and tolerance (or at the duty limit,
    /// where that comes first; see [`OverloadPoint::limited_by`]).
    pub overload: Vec<OverloadPoint>,
    /// Bias winding estimate.
    pub bias: Option<BiasEstimate>,
    /// Efficiency at low line, full load.
    pub efficiency: f64,
    /// Efficiency iterations at low line, full load.
    pub efficiency_iterations: usize,
    /// Largest efficiency residual over the corners.
    pub efficiency_residual: f64,
    /// Iterations of the inductance and bulk-capacitor choice.
    pub design_iterations: usize,
    /// The rule book used (defaults with the spec's overrides).
    pub rules: RuleBook,
    /// Rule results.
    pub checks: Vec<CheckResult>,
    /// The values the specification left open and the design derived, with how.
    pub defaults: Vec<DerivedDefault>,
    /// The regulated output shorted, at low and high line, at the highest current limit
    /// (empty when its rectifier has no drop: nothing would demagnetise the inductance).
    pub short_circuit: Vec<ShortCircuitPoint>,
    /// Junction temperature of the switch and of each output rectifier at its worst corner.
    pub junctions: Vec<JunctionTemperature>,
    /// No load at low and high line ([`NO_LOAD_FRACTION`] of full load), with the
    /// controller's light-load behaviour: the no-load input power estimate.
    pub no_load: Vec<OperatingPoint>,
}

fn leakage_of(spec: &FlybackSpec, l: f64) -> f64 {
    match spec.leakage {
        Leakage::Fraction(x) => x * l,
        Leakage::Value(v) => v.value,
    }
}

fn choose_inductance(mode: ModeTarget, vin: f64, p: f64, vr: f64, f: f64) -> f64 {
    let lb = boundary_inductance_si(vin, p, vr, f);
    match mode {
        ModeTarget::Discontinuous { margin } => (1.0 - margin) * lb,
        ModeTarget::Boundary => lb,
        ModeTarget::Continuous { ripple_ratio } => 2.0 * lb / ripple_ratio,
    }
}

/// Designs a flyback power stage from a specification.
///
/// Method: (1) the primary inductance and, with a target valley, the bulk capacitor (rounded
/// up to E12) are chosen at low line and full load, at the bulk valley that capacitor gives,
/// iterating with the efficiency until both settle. Mode targets: DCM L = (1 − margin)·L_b; boundary L = L_b; CCM with ripple ratio r,
/// L = 2·L_b/r, where L_b = (V·D_b)²/(2·P·f) and D_b = V_r/(V + V_r). (2) The current limit
/// (given, or 10 % above the low-line full-load peak at its low tolerance) is checked against
/// that peak. (3) The clamp is sized at the highest limit plus the sense-delay overshoot at
/// high line and built from preferred parts (RCD: resistor rounded down to E24, capacitor up
/// to E12; see [`ClampDesign`]); the drain peak adds its highest voltage, the clamp diode's
/// forward recovery and the ringing allowance. (4) Each corner (low/high line × full/light load) is evaluated at its bulk
/// valley; the current-limit corners find the load at which the peak current reaches the
/// highest limit. (5) Overload power is found at both ends of the limit's tolerance at low
/// and high line, or at the load where the duty reaches `max_duty_cycle` if that comes first
/// (the current-limit corners stay at the current limit, the peak a start-up or a short
/// reaches, and may show a duty above the limit). (6) Rules from [`flyback_rule_book`] are checked.
/// Assumptions: fixed frequency, ideal coupling between secondaries (at turn-off the
/// magnetising ampere-turns N_p·I_pk move to the secondaries, each winding taking the share of
/// its power, and fall at the off-time volt-seconds; see [`super::SecondaryPoint`]), constant-power load on the bulk
/// capacitor, operating point at the bulk valley, drain peak at the bulk peak, light load
/// without burst or frequency foldback. Valid for the 5–75 W class; inputs are checked.
/// Errors: a duty limit no bulk capacitor can meet (`max_duty_cycle`), a bulk capacitor too
/// small for the power, a current limit below the required peak (`current_limit`, or
/// `primary_inductance` when the inductance is given).
/// Reference: Erickson & Maksimović, 3rd ed. (2020), ch. 5–6 (DCM, flyback); Hart, *Power
/// Electronics* (2011), section 7.2 (flyback CCM relations).
pub fn flyback_design(spec: &FlybackSpec) -> Result<FlybackDesign> {
    spec.validate()?;
    design(spec).map_err(|e| blame_deep_valley(spec, e))
}

/// A given bulk valley target below this fraction of the lowest rectified line peak is named
/// as the cause when the losses run away (common practice, no published source).
const DEEP_VALLEY_FRACTION: f64 = 0.5;

/// Names a deep valley target as the cause of a runaway: a valley far below the line peak
/// means a small bulk capacitor, deep ripple and the highest currents at the valley, which is
/// where the losses (the clamp first) run away.
#[cold]
fn blame_deep_valley(spec: &FlybackSpec, e: Error) -> Error {
    let (InputRange::Ac { min_rms, .. }, BulkChoice::TargetValley(v)) = (spec.input, spec.bulk)
    else {
        return e;
    };
    let peak = SQRT_2 * min_rms.value - 2.0 * spec.bridge_diode_drop.value;
    let runaway = e.message().contains("losses run away") || e.message().contains("did not settle");
    if e.kind() != ErrorKind::Infeasible || !runaway || v.value >= DEEP_VALLEY_FRACTION * peak {
        return e;
    }
    Error::infeasible(format!(
        "`target_valley_voltage` {} is only {:.0} % of the lowest rectified line peak {}: the bulk \
         capacitor is sized for a deep ripple, and at that valley {}; raise \
         `target_valley_voltage`, or leave it out to derive {} × the peak = {}",
        show(v),
        v.value / peak * 100.0,
        Quantity::new(peak, Dimension::VOLTAGE),
        e.message(),
        DEFAULT_VALLEY_FRACTION,
        Quantity::new(DEFAULT_VALLEY_FRACTION * peak, Dimension::VOLTAGE)
    ))
}

fn design(spec: &FlybackSpec) -> Result<FlybackDesign> {
    let f = spec.switching_frequency.value;
    let vr = spec.reflected_voltage.value;
    let vf_bridge = spec.bridge_diode_drop.value;
    let (line_lo, line_hi, vpk_lo, vpk_hi) = match spec.input {
        InputRange::Ac {
            min_rms, max_rms, ..
        } => (
            min_rms.value,
            max_rms.value,
            SQRT_2 * min_rms.value - 2.0 * vf_bridge,
            SQRT_2 * max_rms.value - 2.0 * vf_bridge,
        ),
        InputRange::Dc { min, max } => (min.value, max.value, min.value, max.value),
    };
    if vpk_lo <= 0.0 {
        return Err(Error::invalid(format!(
            "`min_line_voltage` ({}) must be above twice the bridge diode drop ({})",
            Quantity::new(line_lo, Dimension::VOLTAGE),
            show(spec.bridge_diode_drop)
        )));
    }
    // The lowest duty cycle the design can have at low line, full load: at the rectified peak
    // (no bulk ripple) and the loads' power alone (no losses). CCM and boundary targets run at
    // D_b = V_r/(V + V_r) there; a DCM target with margin m at √(1 − m)·D_b (L = (1 − m)·L_b
    // and D = √(2·P·L·f)/V); a given inductance at min(√(2·P·L·f)/V, D_b). Only a CCM or
    // boundary design is bound by D_b: a DCM design may use a reflected voltage whose D_b
    // exceeds the duty limit.
    let pout_loads = spec.outputs.iter().map(|o| o.power().value).sum::<f64>();
    let db_at_peak = boundary_duty(vpk_lo, vr);
    let d_at_peak = match (spec.primary_inductance, spec.mode) {
        (Some(l), _) => ((2.0 * pout_loads * l.value * f).sqrt() / vpk_lo).min(db_at_peak),
        (None, Some(ModeTarget::Discontinuous { margin })) => (1.0 - margin).sqrt() * db_at_peak,
        _ => db_at_peak,
    };
    if d_at_peak > spec.max_duty_cycle {
        let advice = if d_at_peak < db_at_peak {
            "lower the primary inductance or the reflected voltage, or raise the duty limit"
                .to_string()
        } else {
            let vr_max = vpk_lo * spec.max_duty_cycle / (1.0 - spec.max_duty_cycle);
            format!(
                "lower the reflected voltage to at most {} or raise the duty limit",
                Quantity::new(vr_max, Dimension::VOLTAGE)
            )
        };
        return Err(Error::infeasible(format!(
            "`max_duty_cycle` {} cannot be met: `reflected_voltage` {} at the lowest rectified \
             input {} needs a duty cycle of {:.3} even without bulk ripple; {advice}",
            spec.max_duty_cycle,
            show(spec.reflected_voltage),
            Quantity::new(vpk_lo, Dimension::VOLTAGE),
            d_at_peak,
        )));
    }
    let mut defaults = Vec::new();
    let bulk = match (spec.input, spec.bulk) {
        (InputRange::Ac { .. }, BulkChoice::DerivedValley) => {
            let v = DEFAULT_VALLEY_FRACTION * vpk_lo;
            defaults.push(DerivedDefault {
                key: "target_valley_voltage",
                value: Quantity::new(v, Dimension::VOLTAGE),
                derivation: format!(
                    "{DEFAULT_VALLEY_FRACTION} × the lowest rectified line peak {} \
                     (√2·min_line_voltage − 2·bridge_diode_drop)",
                    Quantity::new(vpk_lo, Dimension::VOLTAGE)
                ),
            });
            BulkChoice::TargetValley(si(v))
        }
        (_, b) => b,
    };
    let overshoot = match spec.clamp_voltage_above_reflected {
        Some(v) => v.value,
        None => {
            let (v, how) = derived_clamp_overshoot(spec, vr, vpk_hi)?;
            defaults.push(DerivedDefault {
                key: "clamp_voltage_above_reflected",
                value: Quantity::new(v, Dimension::VOLTAGE),
                derivation: how,
            });
            v
        }
    };
    let reg = &spec.outputs[spec.regulated_output];
    let turns: Vec<f64> = spec
        .outputs
        .iter()
        .map(|o| vr / (o.voltage + o.rectifier_drop).value)
        .collect();
    let post_filters: Vec<Option<PostFilter>> = spec
        .outputs
        .iter()
        .enumerate()
        .map(
            |(k, o)| match (o.post_filter_inductance, o.post_filter_capacitance) {
                (Some(l), Some(c)) => post_filter(l, c, spec.switching_frequency)
                    .and_then(|p| {
                        // |1 − (f/f₀)²| ≤ 1 for f ≤ √2·f₀: such a filter passes or amplifies
                        // the switching ripple, which no post filter is meant to do
                        if p.gain >= 1.0 {
                            Err(Error::invalid(format!(
                                "the post filter (`post_filter_inductance` {}, \
                                 `post_filter_capacitance` {}) has its corner at {}, too high to \
                                 attenuate at the switching frequency {}; its corner must be below \
                                 f/√2",
                                show(l),
                                show(c),
                                show(p.corner_frequency),
                                show(spec.switching_frequency)
                            )))
                        } else {
                            Ok(Some(p))
                        }
                    })
                    .map_err(|e| e.context(&format!("outputs[{k}]"))),
                _ => Ok(None),
            },
        )
        .collect::<Result<_>>()?;
    let filter_gain: Vec<Option<f64>> = post_filters.iter().map(|p| p.map(|p| p.gain)).collect();
    let spread = ZenerSpread {
        tolerance: spec.zener_tolerance,
        rise_hot: spec.zener_rise_hot,
    };
    let fixed_clamp = design_clamp(ClampKind::Zener, vr, overshoot, 0.0, 0.0, f, spread, false)?;

    // (1) inductance and bulk capacitor at low line, full load
    let start_eta = match spec.efficiency {
        super::spec::EfficiencyModel::Estimate(x)
        | super::spec::EfficiencyModel::Computed { start: x } => x,
    };
    let pout = spec.outputs.iter().map(|o| o.power().value).sum::<f64>();
    let p0 = pout / start_eta;
    let is_ac = matches!(spec.input, InputRange::Ac { .. });
    let size_bulk = |p: f64| -> Result<f64> {
        match (spec.input, bulk) {
            (InputRange::Ac { line_frequency, .. }, BulkChoice::TargetValley(v)) => {
                bulk_capacitance_for_valley(
                    si(line_lo),
                    line_frequency,
                    si(p),
                    v,
                    spec.bridge_diode_drop,
                )
                .map(|c| c.value)
            }
            (_, BulkChoice::Capacitance(c)) => Ok(c.value),
            (InputRange::Dc { .. }, _) | (_, BulkChoice::DerivedValley) => Ok(1.0),
        }
    };
    let mut c_bulk = size_bulk(p0)?;
    let mut l = match (spec.primary_inductance, spec.mode) {
        (Some(l), _) => l.value,
        (None, Some(m)) => {
            let vin = match bulk {
                BulkChoice::TargetValley(v) if is_ac => v.value,
                _ => 0.8 * vpk_lo,
            };
            choose_inductance(m, vin, p0, vr, f)
        }
        (None, None) => {
            return Err(Error::missing(
                "give a `mode` target or a `primary_inductance`",
            ))
        }
    };
    let tol = spec.current_limit_tolerance;
    let delay = spec.current_sense_delay.value;
    // the clamp is sized at the worst case, which depends on the current limit, which depends
    // on the peak current: it takes part in the iteration
    let mut clamp = fixed_clamp;
    let mut design_iterations = 0;
    // each design step starts its efficiency iteration where the last one settled
    let mut warm = None;
    loop {
        design_iterations += 1;
        let ctx = Context {
            spec,
            f,
            vr,
            l,
            llk: leakage_of(spec, l),
            bulk_capacitance: c_bulk,
            clamp,
            turns: turns.clone(),
            filter_gain: filter_gain.clone(),
            min_peak: 0.0,
        };
        let op = match ctx.evaluate_near("low_line_full_load", line_lo, 1.0, warm) {
            Ok(op) => op,
            // while sizing the bulk capacitor for a valley, a first guess from the starting
            // efficiency may be too small for the real input power: grow it and go on
            Err(e)
                if e.kind() == ErrorKind::Infeasible
                    && e.message().contains("`bulk_capacitance`")
                    && is_ac
                    && matches!(bulk, BulkChoice::TargetValley(_))
                    && design_iterations < 100 =>
            {
                c_bulk *= 2.0;
                continue;
            }
            Err(e) => return Err(e),
        };
        warm = Some(op.warm_start());
        let p_dc = op.converter_input_power.value;
        // a sized capacitor is rounded up to E12, and the inductance is chosen at the valley
        // the rounded capacitor really gives; after a few steps the capacitor only grows, so the
        // discrete choice cannot oscillate between two values
        let mut new_c = size_bulk(p_dc)?;
        if is_ac && matches!(bulk, BulkChoice::TargetValley(_)) {
            new_c = at_or_above_value(new_c, ESeries::E12)?;
            if design_iterations > 3 {
                new_c = new_c.max(c_bulk);
            }
        }
        let vin = op.bulk_valley_voltage.value;
        let new_l = match (spec.primary_inductance, spec.mode) {
            // the inductance stores the magnetising power (the cycle moves that power)
            (None, Some(m)) => choose_inductance(m, vin, op.magnetising_power.value, vr, f),
            _ => l,
        };
        let ilim = spec.current_limit.map(|i| i.value).unwrap_or(
            (1.0 + CURRENT_LIMIT_HEADROOM) * op.primary_current_peak.value / (1.0 - tol),
        );
        let ipk_worst = ilim * (1.0 + tol) + vpk_hi * delay / new_l;
        let mut new_clamp = design_clamp(
            spec.clamp,
            vr,
            overshoot,
            leakage_of(spec, new_l),
            ipk_worst,
            f,
            spread,
            true,
        )?;
        // the resistor is a preferred value: after a few steps it may only fall (a lower
        // resistor holds a lower clamp voltage), so the discrete choice cannot oscillate
        if design_iterations > 3 {
            if let (Some(rn), Some(ro)) = (new_clamp.resistor, clamp.resistor) {
                if rn > ro {
                    new_clamp = clamp.with_parts(vr, leakage_of(spec, new_l), ipk_worst, f);
                }
            }
        }
        let clamp_change = if clamp.power.value > 0.0 {
            (new_clamp.power.value / clamp.power.value - 1.0).abs()
        } else {
            new_clamp.power.value.min(1.0)
        };
        let change = (new_l / l - 1.0).abs() + (new_c / c_bulk - 1.0).abs() + clamp_change;
        l = new_l;
        c_bulk = new_c;
        clamp = new_clamp;
        if change < 1e-8 {
            break;
        }
        if design_iterations >= 100 {
            return Err(Error::infeasible(format!(
                "the primary inductance and bulk capacitor did not settle in 100 iterations (last change {change:.2e})"
            )));
        }
    }
    let llk = leakage_of(spec, l);
    let mut ctx = Context {
        spec,
        f,
        vr,
        l,
        llk,
        bulk_capacitance: c_bulk,
        clamp,
        turns: turns.clone(),
        filter_gain,
        min_peak: 0.0,
    };

    // (2) current limit
    let first = ctx.evaluate_near("low_line_full_load", line_lo, 1.0, warm)?;
    let ipk_design = first.primary_current_peak.value;
    let ilim = match spec.current_limit {
        Some(i) => {
            let low = i.value * (1.0 - tol);
            if low < ipk_design {
                let (name, value) = match spec.primary_inductance {
                    Some(l) => ("primary_inductance", show(l)),
                    None => ("current_limit", show(i)),
                };
                return Err(Error::infeasible(format!(
                    "`{name}` {value} is too small for the current limit: the peak current at low \
                     line and full load is {}, above the lowest current limit {} ({} − {} %); \
                     {}",
                    Quantity::new(ipk_design, Dimension::CURRENT),
                    Quantity::new(low, Dimension::CURRENT),
                    show(i),
                    tol * 100.0,
                    if spec.primary_inductance.is_some() {
                        "raise the inductance or the current limit"
                    } else {
                        "raise the current limit"
                    }
                )));
            }
            i.value
        }
        None => {
            let i = (1.0 + CURRENT_LIMIT_HEADROOM) * ipk_design / (1.0 - tol);
            defaults.push(DerivedDefault {
                key: "current_limit",
                value: Quantity::new(i, Dimension::CURRENT),
                derivation: format!(
                    "{} % above the low-line full-load peak {} at the low end of its ±{} % \
                     tolerance",
                    CURRENT_LIMIT_HEADROOM * 100.0,
                    Quantity::new(ipk_design, Dimension::CURRENT),
                    tol * 100.0
                ),
            });
            i
        }
    };
    let ilim_min = ilim * (1.0 - tol);
    let ilim_max = ilim * (1.0 + tol);

    // (3) clamp at the worst case
    let ipk_worst = ilim_max + vpk_hi * delay / l;
    // the clamp as built: the preferred parts the iteration settled on, at the worst case
    ctx.clamp = match ctx.clamp.resistor {
        Some(_) => ctx.clamp.with_parts(vr, llk, ipk_worst, f),
        None => design_clamp(spec.clamp, vr, overshoot, llk, ipk_worst, f, spread, true)?,
    };

    // (4) corners; a foldback or burst controller holds its least peak below full load
    ctx.min_peak = match spec.light_load_control {
        LightLoadControl::FixedFrequency => 0.0,
        LightLoadControl::FrequencyFoldback {
            minimum_peak_fraction,
            ..
        }
        | LightLoadControl::Burst {
            minimum_peak_fraction,
        } => minimum_peak_fraction * ilim,
    };
    let light = spec.light_load_fraction;
    let mut corners = vec![
        ctx.evaluate_near("low_line_full_load", line_lo, 1.0, Some(first.warm_start()))?,
        ctx.evaluate("low_line_light_load", line_lo, light)?,
        ctx.evaluate("high_line_full_load", line_hi, 1.0)?,
        ctx.evaluate("high_line_light_load", line_hi, light)?,
    ];
    // (5) overload across line and tolerance
    let mut overload = Vec::new();
    let mut at_limit = Vec::with_capacity(2);
    for (line, line_name, full, light) in [
        (line_lo, "low_line", &corners[0], &corners[1]),
        (line_hi, "high_line", &corners[2], &corners[3]),
    ] {
        for (limit, case) in [(ilim_min, "minimum"), (ilim_max, "maximum")] {
            let name = format!("current_limit_{line_name}");
            let op = at_current_limit(&ctx, &name, limit, delay, light, full)?;
            // the controller's duty limit may come first: the power then ends there
            let (at, limited_by) = if op.duty_cycle > spec.max_duty_cycle {
                (at_duty_limit(&ctx, &name, light, &op)?, "max_duty_cycle")
            } else {
                (op.clone(), "current_limit")
            };
            overload.push(OverloadPoint {
                line_voltage: si(line),
                limit_case: case,
                current_limit: si(limit),
                primary_current_peak: at.primary_current_peak,
                output_power: at.output_power,
                load_fraction: at.load_fraction,
                mode: at.mode,
                duty_cycle: at.duty_cycle,
                limited_by,
            });
            if case == "maximum" {
                at_limit.push(op);
            }
        }
    }
    corners.extend(at_limit);
    let design_op = &corners[0];
    let p_dc = design_op.converter_input_power.value;
    let dmax = spec.max_duty_cycle;
    let v_needed_ccm = vr * (1.0 - dmax) / dmax;
    let v_needed_dcm = (2.0 * design_op.magnetising_power.value * l * f).sqrt() / dmax;
    let bulk_valley_needed = v_needed_ccm.min(v_needed_dcm);
    let hold_up_end = spec
        .hold_up_end_voltage
        .map(|v| v.value)
        .unwrap_or(bulk_valley_needed);
    let hold = if is_ac {
        // a valley already at or below the end voltage holds up for no time at all; the
        // `bulk_valley_minimum` and `hold_up_time` rules report it
        if design_op.bulk_valley_voltage.value <= hold_up_end {
            Some(si(0.0))
        } else {
            Some(hold_up_time(
                si(c_bulk),
                design_op.bulk_valley_voltage,
                si(hold_up_end),
                si(p_dc),
            )?)
        }
    } else {
        None
    };
    let bias = spec.bias.as_ref().map(|b| {
        let nb = vr / (b.voltage + b.rectifier_drop).value;
        let per = turns[spec.regulated_output] / nb;
        let vf_light = (reg.rectifier_drop.value + RECTIFIER_DROP_PER_EFOLD * light.ln()).max(0.0);
        BiasEstimate {
            turns_ratio: nb,
            turns_per_regulated_turn: per,
            voltage_full_load: b.voltage,
            voltage_light_load: si((reg.voltage.value + vf_light) * per - b.rectifier_drop.value),
        }
    });

    // no load: the feedback network and a pre-load, NO_LOAD_FRACTION of full load
    let no_load = vec![
        ctx.evaluate("no_load_low_line", line_lo, NO_LOAD_FRACTION)?,
        ctx.evaluate("no_load_high_line", line_hi, NO_LOAD_FRACTION)?,
    ];
    // (6) short circuit at both lines, at the highest limit
    // (an ideal rectifier without drop leaves nothing to demagnetise a shorted output: no
    // short-circuit analysis then)
    let short_circuit = if reg.rectifier_drop.value > 0.0 {
        vec![
            short_circuit_at(
                spec,
                line_lo,
                vpk_lo,
                l,
                ilim_max,
                turns[spec.regulated_output],
            ),
            short_circuit_at(
                spec,
                line_hi,
                vpk_hi,
                l,
                ilim_max,
                turns[spec.regulated_output],
            ),
        ]
    } else {
        Vec::new()
    };
    // (7) rules
    let rules = flyback_rule_book(spec, si(bulk_valley_needed))?;
    let mut checks = evaluate_rules(spec, &rules, &corners, hold)?;
    let junctions = junction_temperatures(spec, &corners);
    for j in &junctions {
        let id = if j.part == "switch" {
            "switch_junction_temperature"
        } else {
            "rectifier_junction_temperature"
        };
        let mut c = rules.check(id, Quantity::from_typed(j.junction_temperature))?;
        if j.part != "switch" {
            c.description = format!("{} ({})", c.description, j.part.replace('_', " "));
        }
        checks.push(c);
    }
    if !short_circuit.is_empty() {
        checks.push(rules.check(
            "short_circuit_settles",
            Quantity::number(fold_max(short_circuit.iter().map(|p| p.on_time_ratio))),
        )?);
    }
    let efficiency_residual = corners
        .iter()
        .map(|c| c.efficiency_residual)
        .fold(0.0, f64::max);
    Ok(FlybackDesign {
        output_power: si(pout),
        primary_inductance: si(l),
        leakage_inductance: si(llk),
        switching_frequency: spec.switching_frequency,
        reflected_voltage: spec.reflected_voltage,
        current_limit: si(ilim),
        current_limit_tolerance: tol,
        turns_ratios: turns,
        bias_turns_ratio: bias.map(|b| b.turns_ratio),
        bulk_capacitance: if is_ac { Some(si(c_bulk)) } else { None },
        bulk_valley_needed: si(bulk_valley_needed),
        hold_up_time: hold,
        hold_up_end_voltage: si(hold_up_end),
        efficiency: corners[0].efficiency,
        efficiency_iterations: corners[0].efficiency_iterations,
        efficiency_residual,
        clamp: ctx.clamp,
        post_filters,
        overload,
        bias,
        design_iterations,
        rules,
        checks,
        corners,
        defaults,
        short_circuit,
        junctions,
        no_load,
    })
}

/// The drain voltage the `drain_voltage_derating` rule allows: its overridden limit, or
/// [`DRAIN_DERATING`] × the switch rating.
fn drain_voltage_limit(spec: &FlybackSpec) -> Result<f64> {
    for (id, q) in &spec.rule_limits {
        if id == "drain_voltage_derating" {
            let v = q
                .to_typed::<ElectricPotential>("rule_limits.drain_voltage_derating")?
                .value;
            if v.is_nan() || v <= 0.0 {
                return Err(Error::out_of_range(format!(
                    "`rule_limits.drain_voltage_derating` must be a drain voltage above zero (V), got {q}"
                )));
            }
            return Ok(v);
        }
    }
    Ok(DRAIN_DERATING * spec.switch_voltage_rating.value)
}

/// The clamp voltage above the reflected voltage when none is given: the smaller of
/// [`DEFAULT_CLAMP_OVERSHOOT_FRACTION`]·V_r and what the drain limit leaves above the highest
/// bulk peak and V_r, V_ds,limit − V_bulk,pk,max − V_r; an error naming the reflected voltage
/// and the switch rating when that is below [`MIN_CLAMP_OVERSHOOT_FRACTION`]·V_r.
fn derived_clamp_overshoot(spec: &FlybackSpec, vr: f64, vpk_hi: f64) -> Result<(f64, String)> {
    let limit = drain_voltage_limit(spec)?;
    // the drain reaches bulk peak + highest clamp voltage + forward recovery + ringing; the
    // highest clamp voltage is the top of the RCD ripple or the Zener's highest
    let top = match spec.clamp {
        ClampKind::Rcd => 1.0 + CLAMP_CAPACITOR_RIPPLE / 2.0,
        ClampKind::Zener => (1.0 + spec.zener_tolerance) * (1.0 + spec.zener_rise_hot.max(0.0)),
    };
    let allowances = spec.clamp_diode_forward_recovery.value + spec.drain_ringing_allowance.value;
    let room = (limit - vpk_hi - allowances) / top - vr;
    let wanted = DEFAULT_CLAMP_OVERSHOOT_FRACTION * vr;
    let least = MIN_CLAMP_OVERSHOOT_FRACTION * vr;
    let v = |x: f64| Quantity::new(x, Dimension::VOLTAGE);
    if room < least {
        return Err(Error::infeasible(format!(
            "`reflected_voltage` {} with `switch_voltage_rating` {} leaves {} for the clamp above \
             the reflected voltage (drain limit {} less the highest bulk peak {}, the forward \
             recovery and ringing allowances and the clamp's spread, less the reflected voltage), \
             less than the {} % of the reflected voltage a clamp needs ({}); lower \
             `reflected_voltage`, choose a higher `switch_voltage_rating`, or give \
             `clamp_voltage_above_reflected`",
            v(vr),
            show(spec.switch_voltage_rating),
            v(room),
            v(limit),
            v(vpk_hi),
            MIN_CLAMP_OVERSHOOT_FRACTION * 100.0,
            v(least)
        )));
    }
    Ok(if room < wanted {
        (
            room,
            format!(
                "what the drain limit {} leaves above the highest bulk peak {}, the reflected \
                 voltage {}, the forward-recovery and ringing allowances and the clamp's spread \
                 (less than {} × the reflected voltage)",
                v(limit),
                v(vpk_hi),
                v(vr),
                DEFAULT_CLAMP_OVERSHOOT_FRACTION
            ),
        )
    } else {
        (
            wanted,
            format!(
                "{} × the reflected voltage {} (the drain limit {} leaves {} above the highest \
                 bulk peak, the reflected voltage, the allowances and the clamp's spread)",
                DEFAULT_CLAMP_OVERSHOOT_FRACTION,
                v(vr),
                v(limit),
                v(room)
            ),
        )
    })
}

/// Most evaluations of one load search (the bracket is found in two or three, Brent's method
/// takes about six more).
const LOAD_SEARCH_MAX_EVALUATIONS: usize = 100;
/// Relative tolerance of the load found by a search (a few orders below the precision results
/// are reported and pinned to).
const LOAD_SEARCH_TOLERANCE: Tolerance = Tolerance::relative(1e-9);
/// The highest load, as a multiple of full load, a current-limit search looks at.
const MAX_OVERLOAD_FACTOR: f64 = 50.0;

/// Tracks the operating point with the highest load below a threshold (f < 0): the point a
/// load search returns, since the load rises until f crosses zero.
struct BelowThreshold {
    best: OperatingPoint,
}

impl BelowThreshold {
    fn offer(&mut self, f: f64, op: OperatingPoint) {
        if f < 0.0 && op.load_fraction > self.best.load_fraction {
            self.best = op;
        }
    }
    fn warm(&self) -> Option<f64> {
        Some(self.best.warm_start())
    }
    fn into_named(self, name: &str) -> OperatingPoint {
        let mut op = self.best;
        op.corner = name.to_string();
        op
    }
}

/// The operating point at which the peak current (with the sense-delay overshoot) reaches a
/// current limit, found by Brent's method on the load.
///
/// `light` and `full` are this line's corners at light and full load (already evaluated with
/// the same context): they are the search's first samples, never evaluated again. The upper
/// end of the bracket is extrapolated from the last two samples along the peak current; a load
/// where the operating point is infeasible (the bulk capacitor gives out) counts as beyond the
/// limit. Every evaluation starts its efficiency iteration from the nearest point below.
fn at_current_limit(
    ctx: &Context,
    name: &str,
    limit: f64,
    delay: f64,
    light: &OperatingPoint,
    full: &OperatingPoint,
) -> Result<OperatingPoint> {
    let line = light.line_voltage.value;
    let excess = |op: &OperatingPoint| {
        op.primary_current_peak.value - (limit + op.bulk_valley_voltage.value * delay / ctx.l)
    };
    // an infeasible load counts as beyond the limit, by as much as the limit itself
    let beyond = limit;
    let d_light = excess(light);
    if d_light >= 0.0 {
        return Err(Error::infeasible(format!(
            "corner {name}: the current limit {} is reached below light load",
            Quantity::new(limit, Dimension::CURRENT)
        )));
    }
    let mut below = BelowThreshold {
        best: light.clone(),
    };
    let d_full = excess(full);
    below.offer(d_full, full.clone());
    let sample = |k: f64, below: &mut BelowThreshold| -> Result<f64> {
        match ctx.evaluate_near(name, line, k, below.warm()) {
            Ok(op) => {
                let d = excess(&op);
                below.offer(d, op);
                Ok(d)
            }
            Err(e) if e.kind() == ErrorKind::Infeasible => Ok(beyond),
            Err(e) => Err(e),
        }
    };
    // the bracket: [lo, hi] with the peak below the limit at lo and at or above it at hi
    let (mut lo, mut hi) = (
        Sample::new(light.load_fraction, d_light),
        Sample::new(1.0, d_full),
    );
    while hi.f < 0.0 {
        if hi.x >= MAX_OVERLOAD_FACTOR {
            return Err(Error::infeasible(format!(
                "corner {name}: the current limit {} allows more than {MAX_OVERLOAD_FACTOR} \
                 times full load",
                Quantity::new(limit, Dimension::CURRENT)
            )));
        }
        // extrapolate the peak current linearly to the limit, a little beyond, at least 1.2×
        let slope = (hi.f - lo.f) / (hi.x - lo.x);
        let reach = if slope > 0.0 {
            hi.x - hi.f / slope
        } else {
            f64::INFINITY
        };
        let next = (1.05 * reach).max(1.2 * hi.x).min(MAX_OVERLOAD_FACTOR);
        let f = sample(next, &mut below)?;
        lo = hi;
        hi = Sample::new(next, f);
    }
    brent(
        &format!("corner {name}: the load at the current limit"),
        |k| sample(k, &mut below),
        lo,
        hi,
        LOAD_SEARCH_TOLERANCE,
        LOAD_SEARCH_MAX_EVALUATIONS,
    )?;
    Ok(below.into_named(name))
}

/// The operating point at which the duty cycle reaches the controller's maximum, found by
/// Brent's method on the load between light load (`light`, this line's light-load corner) and
/// `above` (a point whose duty exceeds it). The duty rises with load: the bulk valley falls
/// (CCM D = V_r/(V + V_r)) and, in DCM, D = √(2·P·L·f)/V grows with P. An infeasible load
/// counts as above the limit.
fn at_duty_limit(
    ctx: &Context,
    name: &str,
    light: &OperatingPoint,
    above: &OperatingPoint,
) -> Result<OperatingPoint> {
    let dmax = ctx.spec.max_duty_cycle;
    let line = light.line_voltage.value;
    if light.duty_cycle >= dmax {
        return Err(Error::infeasible(format!(
            "corner {name}: the duty cycle reaches `max_duty_cycle` {dmax} below light load"
        )));
    }
    let mut below = BelowThreshold {
        best: light.clone(),
    };
    brent(
        &format!("corner {name}: the load at the duty limit"),
        |k| match ctx.evaluate_near(name, line, k, below.warm()) {
            Ok(op) => {
                let f = op.duty_cycle - dmax;
                below.offer(f, op);
                Ok(f)
            }
            Err(e) if e.kind() == ErrorKind::Infeasible => Ok(1.0),
            Err(e) => Err(e),
        },
        Sample::new(light.load_fraction, light.duty_cycle - dmax),
        Sample::new(above.load_fraction, above.duty_cycle - dmax),
        LOAD_SEARCH_TOLERANCE,
        LOAD_SEARCH_MAX_EVALUATIONS,
    )?;
    Ok(below.into_named(name))
}

fn fold_max(xs: impl Iterator<Item = f64>) -> f64 {
    xs.fold(f64::NEG_INFINITY, f64::max)
}

fn evaluate_rules(
    spec: &FlybackSpec,
    rules: &RuleBook,
    corners: &[OperatingPoint],
    hold: Option<Time>,
) -> Result<Vec<CheckResult>> {
    let normal = &corners[..4];
    let n = Quantity::number;
    let mut out = Vec::new();
    out.push(rules.check(
        "duty_cycle_limit",
        n(fold_max(normal.iter().map(|c| c.duty_cycle))),
    )?);
    out.push(rules.check(
        "drain_voltage_derating",
        Quantity::new(
            fold_max(corners.iter().map(|c| c.drain_voltage_peak.value)),
            Dimension::VOLTAGE,
        ),
    )?);
    for (k, o) in spec.outputs.iter().enumerate() {
        if let Some(r) = o.rectifier_voltage_rating {
            let v = fold_max(
                corners
                    .iter()
                    .map(|c| c.secondaries[k].rectifier_reverse_voltage.value),
            );
            let mut c = rules.check("rectifier_voltage_derating", n(v / r.value))?;
            c.description = format!("{} (output {})", c.description, k + 1);
            out.push(c);
        } else {
            let v = fold_max(
                corners
                    .iter()
                    .map(|c| c.secondaries[k].rectifier_reverse_voltage.value),
            );
            out.push(rules.not_applicable(
                "rectifier_voltage_derating",
                Quantity::new(v, Dimension::VOLTAGE),
                &format!("output {}: no rectifier voltage rating given, so its highest reverse voltage (the value) is not compared with a rating", k + 1),
            )?);
        }
    }
    for (k, o) in spec.outputs.iter().enumerate() {
        if let Some(r) = o.ripple_current_rating {
            let v = fold_max(
                normal
                    .iter()
                    .map(|c| c.secondaries[k].capacitor_ripple_current_rms.value),
            );
            let mut c = rules.check("output_capacitor_ripple_current", n(v / r.value))?;
            c.description = format!("{} (output {})", c.description, k + 1);
            out.push(c);
        } else {
            let v = fold_max(
                normal
                    .iter()
                    .map(|c| c.secondaries[k].capacitor_ripple_current_rms.value),
            );
            out.push(rules.not_applicable(
                "output_capacitor_ripple_current",
                Quantity::new(v, Dimension::CURRENT),
                &format!("output {}: no capacitor ripple current rating given, so its capacitor ripple current (the value) is not compared with a rating", k + 1),
            )?);
        }
    }
    if let Some(r) = spec.bulk_ripple_current_rating {
        let v = fold_max(normal.iter().map(|c| c.bulk_ripple_current_rms.value));
        out.push(rules.check("bulk_capacitor_ripple_current", n(v / r.value))?);
    } else {
        let v = fold_max(normal.iter().map(|c| c.bulk_ripple_current_rms.value));
        out.push(rules.not_applicable(
            "bulk_capacitor_ripple_current",
            Quantity::new(v, Dimension::CURRENT),
            "no `bulk_ripple_current_rating` given, so the bulk ripple current (the value) is not compared with a rating",
        )?);
    }
    if spec.mode.is_some() {
        out.push(rules.check("mode_target", n(corners[0].inductance_ratio))?);
    } else {
        out.push(rules.not_applicable(
            "mode_target",
            n(corners[0].inductance_ratio),
            "no `mode` target given, so L over the boundary inductance at low line, full load (the value) is not held to one",
        )?);
    }
    out.push(rules.check(
        "bulk_valley_minimum",
        Quantity::from_typed(corners[0].bulk_valley_voltage),
    )?);
    match (spec.hold_up_time, hold) {
        (Some(_), Some(t)) => out.push(rules.check("hold_up_time", Quantity::from_typed(t))?),
        (_, t) => out.push(not_applicable_hold_up(t)?),
    }
    Ok(out)
}

/// The hold-up check when no hold-up time is required: not applicable, the hold-up time
/// found (if any) as its value.
fn not_applicable_hold_up(t: Option<Time>) -> Result<CheckResult> {
    let rule = crate::rules::Rule::new(
        "hold_up_time",
        "hold-up time from the low-line valley at full load",
        "spec",
        crate::rules::Comparison::AtLeast,
        Quantity::new(0.0, Dimension::TIME),
        0.05,
    )?;
    let value = Quantity::new(t.map_or(0.0, |t| t.value), Dimension::TIME);
    Ok(rule.not_applicable(
        value,
        "no `hold_up_time` required, so the hold-up time is not checked",
    ))
}

impl FlybackDesign {
    /// The corner with a name (`low_line_full_load`, …, `current_limit_high_line`); None for an
    /// unknown name.
    pub fn corner(&self, name: &str) -> Option<&OperatingPoint> {
        self.corners.iter().find(|c| c.corner == name)
    }
    /// One row per corner, the fields of [`OperatingPoint`] with units.
    pub fn corner_table(&self) -> Table {
        let mut t = Table::new();
        for c in &self.corners {
            t.push_row(c.fields());
        }
        t
    }
    /// Output power at the current limit, one row per line and tolerance end (see
    /// [`OverloadPoint`]).
    pub fn overload_table(&self) -> Table {
        let mut t = Table::new();
        for o in &self.overload {
            t.push_row(vec![
                Field::quantity("line_voltage", o.line_voltage),
                Field::new("limit_case", o.limit_case),
                Field::quantity("current_limit", o.current_limit),
                Field::quantity("primary_current_peak", o.primary_current_peak),
                Field::quantity("output_power", o.output_power),
                Field::new("load_fraction", o.load_fraction),
                Field::new("mode", o.mode.as_str()),
                Field::new("duty_cycle", o.duty_cycle),
                Field::new("limited_by", o.limited_by),
            ]);
        }
        t
    }
    /// The highest primary peak current of any corner: at the highest current limit with the
    /// sense-delay overshoot at high line, I_lim·(1 + tol) + V_bulk·t_d/L (the primary current
    /// keeps rising at V/L during the delay t_d). The transformer's peak flux is checked at this
    /// current.
    pub fn primary_current_peak_at_limit(&self) -> ElectricCurrent {
        si(fold_max(
            self.corners.iter().map(|c| c.primary_current_peak.value),
        ))
    }
    /// The values the specification left open and the design derived: one row per value,
    /// with `key`, `value` (text with its unit: the rows differ in dimension) and `derivation`
    /// (no calculation).
    pub fn defaults_table(&self) -> Table {
        let mut t = Table::new();
        for d in &self.defaults {
            t.push_row(vec![
                Field::new("key", d.key),
                // the values differ in dimension, so each is written with its own unit
                Field::new("value", d.value.to_string()),
                Field::new("derivation", d.derivation.as_str()),
            ]);
        }
        t
    }
    /// Junction temperatures, one row per part (see [`JunctionTemperature`]).
    pub fn junction_table(&self) -> Table {
        let mut t = Table::new();
        for j in &self.junctions {
            t.push_row(j.fields());
        }
        t
    }
    /// The shorted output at low and high line, one row per line (see [`ShortCircuitPoint`]).
    pub fn short_circuit_table(&self) -> Table {
        let mut t = Table::new();
        for p in &self.short_circuit {
            t.push_row(p.fields());
        }
        t
    }
    /// The worst rule status of [`FlybackDesign::checks`] (fail over warn over pass).
    pub fn worst_status(&self) -> Status {
        worst_status(&self.checks)
    }
    /// Number of failed checks (strict runs count these).
    pub fn failed_checks(&self) -> usize {
        self.checks
            .iter()
            .filter(|c| c.status == Status::Fail)
            .count()
    }
}

crate::serialize_as_record!(FlybackDesign);

impl Record for FlybackDesign {
    fn fields(&self) -> Vec<Field> {
        // a design from flyback_design always has six corners; a hand-built one may not
        let (Some(c0), Some(c2)) = (self.corners.first(), self.corners.get(2)) else {
            return vec![
                Field::quantity("output_power", self.output_power),
                Field::quantity("primary_inductance", self.primary_inductance),
            ];
        };
        let max_of =
            |f: &dyn Fn(&OperatingPoint) -> f64| fold_max(self.corners.iter().take(4).map(f));
        let mut v = vec![
            Field::quantity("output_power", self.output_power),
            Field::quantity("primary_inductance", self.primary_inductance),
            Field::quantity("leakage_inductance", self.leakage_inductance),
            Field::quantity("switching_frequency", self.switching_frequency),
            Field::quantity("reflected_voltage", self.reflected_voltage),
        ];
        for (k, n) in self.turns_ratios.iter().enumerate() {
            v.push(Field::new(format!("turns_ratio_{}", k + 1), *n));
        }
        if let Some(n) = self.bias_turns_ratio {
            v.push(Field::new("bias_turns_ratio", n));
        }
        v.extend([
            Field::new("mode_low_line_full_load", c0.mode.as_str()),
            Field::new("inductance_ratio", c0.inductance_ratio),
            // load (fraction of full) below which the supply is in DCM, at low and high line;
            // 1 or more: DCM at every load (converter input power ratio, an approximation of load)
            Field::new(
                "dcm_below_load_low_line",
                c0.boundary_power.value / c0.magnetising_power.value,
            ),
            Field::new(
                "dcm_below_load_high_line",
                c2.boundary_power.value / c2.magnetising_power.value,
            ),
            Field::new("duty_cycle_max", max_of(&|c: &OperatingPoint| c.duty_cycle)),
            Field::quantity("current_limit", self.current_limit),
            Field::quantity(
                "primary_current_peak_at_limit",
                self.primary_current_peak_at_limit(),
            ),
            Field::new("current_limit_tolerance", self.current_limit_tolerance),
            Field::quantity(
                "primary_current_peak",
                si::<ElectricCurrent>(max_of(&|c: &OperatingPoint| c.primary_current_peak.value)),
            ),
            Field::quantity(
                "primary_current_rms",
                si::<ElectricCurrent>(max_of(&|c: &OperatingPoint| c.primary_current_rms.value)),
            ),
        ]);
        if let Some(c) = self.bulk_capacitance {
            v.push(Field::quantity("bulk_capacitance", c));
            // µF per watt of output, to compare with common practice (2–3 µF/W universal input)
            v.push(Field::new(
                "bulk_microfarads_per_watt",
                c.value / self.output_power.value * 1e6,
            ));
        }
        v.push(Field::quantity(
            "bulk_valley_voltage",
            c0.bulk_valley_voltage,
        ));
        v.push(Field::quantity(
            "bulk_valley_needed",
            self.bulk_valley_needed,
        ));
        if let Some(t) = self.hold_up_time {
            v.push(Field::quantity("hold_up_time", t));
        }
        v.push(Field::quantity(
            "bulk_ripple_current_rms",
            si::<ElectricCurrent>(max_of(&|c: &OperatingPoint| {
                c.bulk_ripple_current_rms.value
            })),
        ));
        v.push(Field::quantity(
            "drain_voltage_peak",
            si::<ElectricPotential>(fold_max(
                self.corners.iter().map(|c| c.drain_voltage_peak.value),
            )),
        ));
        v.extend(self.clamp.fields());
        let outputs = self
            .corners
            .iter()
            .map(|c| c.secondaries.len())
            .min()
            .unwrap_or(0);
        for k in 0..outputs {
            v.push(Field::quantity(
                format!("rectifier_reverse_voltage_{}", k + 1),
                si::<ElectricPotential>(fold_max(
                    self.corners
                        .iter()
                        .map(|c| c.secondaries[k].rectifier_reverse_voltage.value),
                )),
            ));
            v.push(Field::quantity(
                format!("output_ripple_voltage_pp_{}", k + 1),
                si::<ElectricPotential>(max_of(&|c: &OperatingPoint| {
                    c.secondaries[k].ripple_voltage_pp.value
                })),
            ));
            if let Some(Some(p)) = self.post_filters.get(k) {
                v.extend(p.fields(&format!("output_{}.", k + 1)));
            }
        }
        v.push(Field::new("efficiency", self.efficiency));
        if let Some(c) = self.corner("high_line_full_load") {
            v.push(Field::new("efficiency_high_line", c.efficiency));
        }
        v.push(Field::new(
            "efficiency_iterations",
            self.efficiency_iterations as i64,
        ));
        v.push(Field::new("efficiency_residual", self.efficiency_residual));
        let lo = self
            .overload
            .iter()
            .map(|o| o.output_power.value)
            .fold(f64::INFINITY, f64::min);
        let hi = fold_max(self.overload.iter().map(|o| o.output_power.value));
        v.push(Field::quantity("overload_power_min", si::<Power>(lo)));
        v.push(Field::quantity("overload_power_max", si::<Power>(hi)));
        if let Some(b) = &self.bias {
            v.push(Field::quantity(
                "bias_voltage_full_load",
                b.voltage_full_load,
            ));
            v.push(Field::quantity(
                "bias_voltage_light_load",
                b.voltage_light_load,
            ));
        }
        if !self.short_circuit.is_empty() {
            v.push(Field::quantity(
                "short_circuit_current_peak",
                si::<ElectricCurrent>(fold_max(
                    self.short_circuit
                        .iter()
                        .map(|p| p.primary_current_peak.value),
                )),
            ));
            v.push(Field::quantity(
                "short_circuit_power_average",
                si::<Power>(fold_max(
                    self.short_circuit.iter().map(|p| p.power_average.value),
                )),
            ));
            v.push(Field::new(
                "short_circuit_settles",
                self.short_circuit.iter().all(|p| p.settles),
            ));
        }
        if !self.no_load.is_empty() {
            v.push(Field::quantity(
                "no_load_input_power",
                si::<Power>(fold_max(self.no_load.iter().map(|c| c.input_power.value))),
            ));
        }
        if let Some(c) = self.corner("high_line_light_load") {
            v.push(Field::quantity(
                "light_load_switching_frequency",
                c.switching_frequency,
            ));
        }
        v.push(Field::new(
            "derived_defaults",
            self.defaults
                .iter()
                .map(|d| d.key)
                .collect::<Vec<_>>()
                .join(", "),
        ));
        v.push(Field::new("worst_status", self.worst_status().to_string()));
        v.push(Field::new("failed_checks", self.failed_checks() as i64));
        v.push(Field::new(
            "overridden_limits",
            crate::rules::overridden_limits(&self.checks),
        ));
        v
    }
}

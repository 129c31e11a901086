//! The bulk capacitor behind a full-wave bridge: valley voltage by energy balance with the
//! bridge conduction time, ripple current, hold-up time at constant power, and sizing.

use crate::error::{Error, Result};
use crate::numeric::{newton_bracketed, Sample, Tolerance};
use crate::report::{Field, Record};
use crate::units::validate::{finite_result, non_negative, positive};
use crate::units::{
    si, Capacitance, Dimension, ElectricCurrent, ElectricPotential, Frequency, Power, Quantity,
    Time,
};
use std::f64::consts::{FRAC_PI_2, PI, SQRT_2};

/// What the bulk capacitor sees at one line voltage and load.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BulkCapacitorSpec {
    /// Line voltage, RMS.
    pub line_voltage_rms: ElectricPotential,
    /// Line frequency (the capacitor is recharged at twice this).
    pub line_frequency: Frequency,
    /// Power drawn from the capacitor by the converter, taken as constant over the line cycle.
    pub input_power: Power,
    /// Bulk capacitance.
    pub capacitance: Capacitance,
    /// Forward drop of one bridge diode (two conduct at a time).
    pub bridge_diode_drop: ElectricPotential,
}

/// The bulk capacitor's voltages and low-frequency currents.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BulkCapacitor {
    /// Peak of the rectified line: √2·V_rms − 2·V_bridge.
    pub peak_voltage: ElectricPotential,
    /// Lowest capacitor voltage, just before the bridge conducts again.
    pub valley_voltage: ElectricPotential,
    /// Peak minus valley.
    pub ripple_voltage_pp: ElectricPotential,
    /// Average capacitor voltage, taken as (peak + valley)/2.
    pub average_voltage: ElectricPotential,
    /// Time per half line cycle during which the bridge conducts.
    pub conduction_time: Time,
    /// Average current through the bridge (equal to the converter's average input current).
    pub bridge_current_avg: ElectricCurrent,
    /// RMS of the bridge current, modelled as a triangular pulse of the conduction time.
    pub bridge_current_rms: ElectricCurrent,
    /// Peak of the bridge current pulse.
    pub bridge_current_peak: ElectricCurrent,
    /// Low-frequency (twice line) ripple current in the capacitor, RMS.
    pub ripple_current_rms: ElectricCurrent,
    /// Capacitance per watt drawn (µF/W is the usual way to say it).
    pub capacitance_per_watt: Quantity,
    /// The power drawn from the capacitor (the input of the calculation, repeated).
    pub input_power: Power,
}

fn peak_of(line_rms: f64, bridge: f64) -> f64 {
    SQRT_2 * line_rms - 2.0 * bridge
}

/// The valley voltage and conduction time of the bulk capacitor by energy balance.
///
/// Formula: the capacitor gives up ½·C·(V_pk² − V_min²) while the converter draws
/// P·(1/(2·f_line) − t_c), with the conduction time t_c = arccos(V_min/V_pk)/(2π·f_line) —
/// the time from the valley, on the rising rectified sine, back up to the peak. The equation is
/// solved for the conduction angle ω·t_c (V_min = V_pk·cos ω·t_c) by a bracketed Newton method
/// (it is monotonic), to 1e-11 relative. The ripple current is that of a
/// triangular bridge-current pulse of width t_c carrying the charge of a half cycle, minus the
/// converter's (constant) average current: I_C,rms = I_avg·√(4/(3·2·f_line·t_c) − 1).
/// Assumes constant power, an ideal sine line, an ideal bridge with a fixed drop, and no
/// source impedance. Valid for a line above twice the bridge drop and a capacitor large enough
/// that the valley stays above zero; otherwise an infeasible-design error.
/// Reference: the energy-balance sizing of the bulk capacitor used in supply design
/// handbooks (e.g. Billings & Morey, *Switchmode Power Supply Handbook*, 3rd ed., 2011; recalled
/// from memory), derived here from ½·C·V² and checked against a time-step simulation in the
/// tests (it lets the bridge stop at the line peak, so its valley is low by under 1 %); the
/// µF/W comparison (2–3 µF/W universal input, about 1 µF/W for 230 V only) is
/// common practice, no published source.
pub fn bulk_capacitor(spec: &BulkCapacitorSpec) -> Result<BulkCapacitor> {
    bulk_capacitor_near(spec, None)
}

/// Relative tolerance of the conduction angle (the solver's last step; the error after it is
/// of the order of its square).
const VALLEY_TOLERANCE: Tolerance = Tolerance::relative(1e-11);
/// Most evaluations of the energy balance one valley solve may take (a cold start takes about
/// five, a warm one two or three).
const VALLEY_MAX_EVALUATIONS: usize = 100;

/// [`bulk_capacitor`] with a starting point for the valley solve: the conduction time an
/// earlier, nearby solution found (another efficiency iteration of the same corner), in
/// seconds. The result is the same to the solver's tolerance; only the number of steps
/// changes. A guess outside the quarter line cycle is ignored.
pub(crate) fn bulk_capacitor_near(
    spec: &BulkCapacitorSpec,
    conduction_guess: Option<f64>,
) -> Result<BulkCapacitor> {
    let vrms = positive("line_voltage_rms", spec.line_voltage_rms)?.value;
    let fl = positive("line_frequency", spec.line_frequency)?.value;
    let p = positive("input_power", spec.input_power)?.value;
    let c = positive("bulk_capacitance", spec.capacitance)?.value;
    let vf = non_negative("bridge_diode_drop", spec.bridge_diode_drop)?.value;
    let vpk = peak_of(vrms, vf);
    if vpk <= 0.0 {
        return Err(Error::invalid(format!(
            "`line_voltage_rms` ({}) must be above twice the bridge diode drop ({})",
            Quantity::from_typed(spec.line_voltage_rms),
            Quantity::from_typed(spec.bridge_diode_drop)
        )));
    }
    let half = 0.5 / fl;
    let w = 2.0 * PI * fl;
    // the energy balance in the conduction angle θ = ω·t_c, V_min = V_pk·cos θ:
    // g(θ) = ½·C·V_pk²·sin²θ − P·(1/(2·f_line) − θ/ω), rising from g(0) = −P/(2·f_line) to
    // g(π/2) (the valley at zero), with g′(θ) = C·V_pk²·sin θ·cos θ + P/ω > 0
    let e_pk = 0.5 * c * vpk * vpk;
    let at_zero_valley = e_pk - p * (half - 0.25 / fl);
    if at_zero_valley <= 0.0 {
        return Err(Error::infeasible(format!(
            "`bulk_capacitance` {} is too small for {} at {} RMS: the capacitor would discharge \
             to zero within a half line cycle; it needs more than {}",
            Quantity::from_typed(spec.capacitance),
            Quantity::from_typed(spec.input_power),
            Quantity::from_typed(spec.line_voltage_rms),
            Quantity::new(
                2.0 * p * (half - 0.25 / fl) / (vpk * vpk),
                Dimension::CAPACITANCE
            )
        )));
    }
    // the sine and cosine of the last angle evaluated, to finish without another one
    let mut last = (f64::NAN, 0.0, 1.0);
    let mut g = |theta: f64| -> Result<(f64, f64)> {
        let (sin, cos) = theta.sin_cos();
        last = (theta, sin, cos);
        Ok((
            e_pk * sin * sin - p * (half - theta / w),
            2.0 * e_pk * sin * cos + p / w,
        ))
    };
    // cold start: the valley without conduction time, sin²θ = P/(C·V_pk²·f_line), a little low
    let guess = conduction_guess
        .map(|t| t * w)
        .filter(|t| *t > 0.0 && *t < FRAC_PI_2)
        .unwrap_or_else(|| (p / (c * vpk * vpk * fl)).min(1.0).sqrt().asin());
    let root = newton_bracketed(
        "the bulk capacitor's valley voltage",
        &mut g,
        Sample::new(0.0, -p * half),
        Sample::new(FRAC_PI_2, at_zero_valley),
        Some(guess),
        VALLEY_TOLERANCE,
        VALLEY_MAX_EVALUATIONS,
    )?;
    // cos θ at the root from the last evaluation: the step δ is below the tolerance, so the
    // second-order expansion is exact to round-off
    let (theta_last, sin_last, cos_last) = last;
    let cos_root = if theta_last.is_nan() {
        root.x.cos()
    } else {
        let d = root.x - theta_last;
        cos_last - sin_last * d - 0.5 * cos_last * d * d
    };
    let vmin = (vpk * cos_root).clamp(0.0, vpk);
    let tc = (root.x / w).max(1e-9);
    let vavg = 0.5 * (vpk + vmin);
    let iavg = p / vavg;
    // a triangular pulse of width tc, repeated every half cycle, with mean iavg
    let duty = (2.0 * fl * tc).min(1.0);
    let ipk = 2.0 * iavg / duty;
    let irms_bridge = ipk * (duty / 3.0).sqrt();
    let iripple = (irms_bridge * irms_bridge - iavg * iavg).max(0.0).sqrt();
    Ok(BulkCapacitor {
        peak_voltage: si(vpk),
        valley_voltage: si(vmin),
        ripple_voltage_pp: si(vpk - vmin),
        average_voltage: si(vavg),
        conduction_time: si(tc),
        bridge_current_avg: si(iavg),
        bridge_current_rms: si(irms_bridge),
        bridge_current_peak: si(ipk),
        ripple_current_rms: si(iripple),
        capacitance_per_watt: Quantity::new(c / p, Dimension::CAPACITANCE / Dimension::POWER),
        input_power: spec.input_power,
    })
}

/// The bulk capacitance that holds the valley at a target for a given power.
///
/// Formula: C = 2·P·(1/(2·f_line) − t_c)/(V_pk² − V_min²), t_c = arccos(V_min/V_pk)/(2π·f_line)
/// (the energy balance of [`bulk_capacitor`] solved for C).
/// Valid for 0 < V_min < V_pk. Reference: as [`bulk_capacitor`].
pub fn bulk_capacitance_for_valley(
    line_voltage_rms: ElectricPotential,
    line_frequency: Frequency,
    input_power: Power,
    valley_voltage: ElectricPotential,
    bridge_diode_drop: ElectricPotential,
) -> Result<Capacitance> {
    let vrms = positive("line_voltage_rms", line_voltage_rms)?.value;
    let fl = positive("line_frequency", line_frequency)?.value;
    let p = positive("input_power", input_power)?.value;
    let vmin = positive("target_valley_voltage", valley_voltage)?.value;
    let vf = non_negative("bridge_diode_drop", bridge_diode_drop)?.value;
    let vpk = peak_of(vrms, vf);
    if vmin >= vpk {
        return Err(Error::invalid(format!(
            "`target_valley_voltage` ({}) must be below the rectified peak ({}) at {} RMS",
            Quantity::from_typed(valley_voltage),
            Quantity::new(vpk, Dimension::VOLTAGE),
            Quantity::from_typed(line_voltage_rms)
        )));
    }
    let tc = (vmin / vpk).acos() / (2.0 * PI * fl);
    Ok(si(2.0 * p * (0.5 / fl - tc) / (vpk * vpk - vmin * vmin)))
}

/// Hold-up time: how long a charged capacitor feeds a constant power before falling to a
/// minimum voltage.
///
/// Formula: t = C·(V_start² − V_end²)/(2·P). Assumes constant power and no recharge.
/// Valid for V_start > V_end ≥ 0; an end voltage at or above the start is an error (it used to
/// return zero silently). Reference: energy of a capacitor, ½·C·V²; the hold-up
/// calculation of supply handbooks, e.g. Billings & Morey, 3rd ed. (2011).
pub fn hold_up_time(
    capacitance: Capacitance,
    start_voltage: ElectricPotential,
    end_voltage: ElectricPotential,
    power: Power,
) -> Result<Time> {
    let c = positive("capacitance", capacitance)?.value;
    let v0 = positive("start_voltage", start_voltage)?.value;
    let v1 = non_negative("end_voltage", end_voltage)?.value;
    let p = positive("power", power)?.value;
    if v1 >= v0 {
        return Err(Error::invalid(format!(
            "`end_voltage` ({}) must be below `start_voltage` ({}): a capacitor that starts at or \
             below the end voltage gives no hold-up",
            Quantity::from_typed(end_voltage),
            Quantity::from_typed(start_voltage)
        )));
    }
    finite_result(
        "hold-up time",
        si(c * (v0 * v0 - v1 * v1) / (2.0 * p)),
        "`capacitance`, `start_voltage` or `power` are",
    )
}

crate::serialize_as_record!(BulkCapacitor);

impl Record for BulkCapacitor {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("peak_voltage", self.peak_voltage),
            Field::quantity("valley_voltage", self.valley_voltage),
            Field::quantity("ripple_voltage_pp", self.ripple_voltage_pp),
            Field::quantity("average_voltage", self.average_voltage),
            Field::quantity("conduction_time", self.conduction_time),
            Field::quantity("bridge_current_avg", self.bridge_current_avg),
            Field::quantity("bridge_current_rms", self.bridge_current_rms),
            Field::quantity("bridge_current_peak", self.bridge_current_peak),
            Field::quantity("ripple_current_rms", self.ripple_current_rms),
            Field::new(
                "microfarads_per_watt",
                self.capacitance_per_watt.value() * 1e6,
            ),
            Field::quantity("input_power", self.input_power),
        ]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn energy_balance_holds_at_the_solution() {
        let s = BulkCapacitorSpec {
            line_voltage_rms: si(90.0),
            line_frequency: si(50.0),
            input_power: si(20.0),
            capacitance: si(47e-6),
            bridge_diode_drop: si(1.0),
        };
        let b = bulk_capacitor(&s).unwrap();
        let (vpk, vmin, tc) = (
            b.peak_voltage.value,
            b.valley_voltage.value,
            b.conduction_time.value,
        );
        // hand check of the same formula: ½C(Vpk² − Vmin²) = P·(10 ms − tc)
        let lhs = 0.5 * 47e-6 * (vpk * vpk - vmin * vmin);
        let rhs = 20.0 * (0.01 - tc);
        assert!((lhs - rhs).abs() < 1e-6 * rhs, "{lhs} vs {rhs}");
        let c =
            bulk_capacitance_for_valley(si(90.0), si(50.0), si(20.0), si(vmin), si(1.0)).unwrap();
        assert!((c.value - 47e-6).abs() < 1e-9);
        assert!(bulk_capacitor(&BulkCapacitorSpec {
            capacitance: si(1e-7),
            ..s
        })
        .is_err());
    }
}

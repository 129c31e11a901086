//! The output shorted (and the start into a discharged output): the primary current's
//! staircase up to the current limit, the peak it settles at or its runaway, and the power
//! the auto-restart lets through.

use super::spec::FlybackSpec;
use crate::report::{Field, Record};
use crate::units::{si, ElectricCurrent, ElectricPotential, Frequency, Power, Time};

/// The flyback with its regulated output shorted, at one line voltage.
///
/// Model: with the output at zero the secondary holds only its rectifier's drop, so the
/// magnetising current falls during the off-time at V_rs/L with V_rs = n·V_f (the reflected
/// short), and rises at V/L during the on-time. Each cycle the switch stays on until the
/// current reaches the (highest) limit, plus the sense delay t_d, but at least the minimum
/// on-time t_min and at most D_max/f: t_on = min(max(t_reach + t_d, t_min), D_max/f). Started
/// from zero (a start-up into a discharged output is the same staircase), cycle after cycle:
/// I_pk = I_v + V·t_on/L, I_v' = max(0, I_pk − V_rs·(1/f − t_on)/L). It settles where the
/// volt-seconds balance, t_on = V_rs/(f·(V + V_rs)), at I_pk = I_lim + V·t_d/L, provided
/// max(t_min, t_d) is at most that balance time; otherwise the current climbs by
/// (V·t − V_rs·(1/f − t))/L every cycle until the fault timer stops the controller (the
/// peak reported is the one at the end of the fault time). The controller then waits
/// `restart_off_time` and tries again (auto-restart). Reference: the staircase is the
/// volt-second balance of the magnetising inductance (Erickson & Maksimović, 3rd ed. (2020),
/// ch. 2 and 6); the auto-restart duty description is common practice, no published source.
#[derive(Clone, Debug, PartialEq)]
pub struct ShortCircuitPoint {
    /// Line voltage (RMS, or the DC bus).
    pub line_voltage: ElectricPotential,
    /// Voltage across the primary during the on-time: the rectified line peak (the bulk
    /// capacitor stays charged while little power flows).
    pub bus_voltage: ElectricPotential,
    /// Switching frequency during the short (the controller's foldback frequency, if any).
    pub switching_frequency: Frequency,
    /// Reflected voltage with the output shorted, V_rs = n·V_f.
    pub reflected_voltage_shorted: ElectricPotential,
    /// On-time at which the volt-seconds balance with the output shorted,
    /// V_rs/(f·(V + V_rs)).
    pub balance_on_time: Time,
    /// The shortest on-time the controller gives, max(t_min, t_d).
    pub shortest_on_time: Time,
    /// Shortest on-time over the balance on-time: at most 1 and the current settles.
    pub on_time_ratio: f64,
    /// True when the staircase settles at the limit (`on_time_ratio` ≤ 1).
    pub settles: bool,
    /// Cycles from zero until the peak first reaches the limit (0 when it never does within
    /// the fault time).
    pub cycles_to_limit: u64,
    /// Highest primary peak: settled, I_lim,max + V·t_d/L; in a runaway, the peak at the end
    /// of the fault time.
    pub primary_current_peak: ElectricCurrent,
    /// Primary current at turn-on once settled (or at the end of the fault time).
    pub primary_current_valley: ElectricCurrent,
    /// Power through the magnetising inductance while the controller runs, ½·L·(I_pk² −
    /// I_v²)·f averaged over the fault time: it ends in the output rectifier and the
    /// secondary copper.
    pub power_during_fault: Power,
    /// Average over the auto-restart cycle: power_during_fault·t_fault/(t_fault + t_off).
    pub power_average: Power,
    /// Average current in the shorted output's rectifier while the controller runs,
    /// power_during_fault/V_f (all of the power reaches the rectifier at its drop).
    pub rectifier_current_during_fault: ElectricCurrent,
    /// That current averaged over the auto-restart cycle.
    pub rectifier_current_average: ElectricCurrent,
}

impl Record for ShortCircuitPoint {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("line_voltage", self.line_voltage),
            Field::quantity("bus_voltage", self.bus_voltage),
            Field::quantity("switching_frequency", self.switching_frequency),
            Field::quantity("reflected_voltage_shorted", self.reflected_voltage_shorted),
            Field::quantity("balance_on_time", self.balance_on_time),
            Field::quantity("shortest_on_time", self.shortest_on_time),
            Field::new("on_time_ratio", self.on_time_ratio),
            Field::new("settles", self.settles),
            Field::new("cycles_to_limit", self.cycles_to_limit as i64),
            Field::quantity("primary_current_peak", self.primary_current_peak),
            Field::quantity("primary_current_valley", self.primary_current_valley),
            Field::quantity("power_during_fault", self.power_during_fault),
            Field::quantity("power_average", self.power_average),
            Field::quantity(
                "rectifier_current_during_fault",
                self.rectifier_current_during_fault,
            ),
            Field::quantity("rectifier_current_average", self.rectifier_current_average),
        ]
    }
}

/// The short circuit at one line (SI numbers; the spec validated): `v` the bus voltage, `l`
/// the primary inductance, `limit` the highest current limit, `n` the regulated output's
/// turns ratio.
pub(crate) fn short_circuit_at(
    spec: &FlybackSpec,
    line: f64,
    v: f64,
    l: f64,
    limit: f64,
    n: f64,
) -> ShortCircuitPoint {
    let reg = &spec.outputs[spec.regulated_output];
    let vf = reg.rectifier_drop.value;
    let vrs = n * vf;
    let f = spec
        .short_circuit_frequency
        .unwrap_or(spec.switching_frequency)
        .value;
    let period = 1.0 / f;
    let td = spec.current_sense_delay.value;
    let tmin = spec.minimum_on_time.value;
    let ton_max = spec.max_duty_cycle * period;
    let shortest = tmin.max(td).min(ton_max);
    let balance = vrs / (f * (v + vrs));
    let ratio = if balance > 0.0 {
        shortest / balance
    } else {
        f64::INFINITY
    };
    let settles = ratio <= 1.0;
    let cycles = (spec.fault_time.value * f).ceil().max(1.0) as u64;
    let (mut iv, mut ipk) = (0.0f64, 0.0f64);
    let mut energy = 0.0;
    let mut first = 0u64;
    for k in 1..=cycles {
        let reach = ((limit - iv) * l / v).max(0.0);
        let ton = (reach + td).max(tmin).min(ton_max);
        let pk = iv + v * ton / l;
        let next = (pk - vrs * (period - ton) / l).max(0.0);
        energy += 0.5 * l * (pk * pk - next * next).max(0.0);
        if first == 0 && pk >= limit {
            first = k;
        }
        let settled = (pk - ipk).abs() <= 1e-12 * pk && (next - iv).abs() <= 1e-12 * pk.max(1e-30);
        ipk = pk;
        iv = next;
        if settled {
            // the rest of the fault time repeats this cycle
            energy += 0.5 * l * (pk * pk - next * next).max(0.0) * (cycles - k) as f64;
            break;
        }
    }
    let t_fault = spec.fault_time.value;
    let p_fault = energy / (cycles as f64 * period);
    let share = t_fault / (t_fault + spec.restart_off_time.value);
    let i_rect = if vf > 0.0 { p_fault / vf } else { 0.0 };
    ShortCircuitPoint {
        line_voltage: si(line),
        bus_voltage: si(v),
        switching_frequency: si(f),
        reflected_voltage_shorted: si(vrs),
        balance_on_time: si(balance),
        shortest_on_time: si(shortest),
        on_time_ratio: ratio,
        settles,
        cycles_to_limit: first,
        primary_current_peak: si(ipk),
        primary_current_valley: si(iv),
        power_during_fault: si(p_fault),
        power_average: si(p_fault * share),
        rectifier_current_during_fault: si(i_rect),
        rectifier_current_average: si(i_rect * share),
    }
}

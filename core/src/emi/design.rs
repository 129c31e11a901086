//! The one-call input filter design: noise estimate per harmonic, the DM filter (one or two
//! LC stages) and common-mode choke that meet the limit with margin, damping and Middlebrook's
//! criterion, X capacitor discharge, the harmonic table and the design checks.

use super::common_mode::{CheckedCm, CommonModeSpec};
use super::differential_mode::{CheckedDm, DifferentialModeSpec, FilterStage};
use super::filter::{
    damping_network, filter_output_impedance_peak, middlebrook_criterion, DampingNetwork,
    ImpedancePeak, MiddlebrookCheck,
};
use super::limits::{emi_limit, Detector, EmissionClass};
use super::spectrum::{DrainVoltageShape, PrimaryCurrentShape};
use super::{in_band_harmonics, level_of_peak};
use crate::error::{Error, Result};
use crate::report::{Field, Record, Table, SAFETY_CAUTION};
use crate::rules::{CheckResult, Comparison, Rule};
use crate::safety::tables::{TOUCH_CURRENT_ES1, TOUCH_CURRENT_SOURCE};
use crate::safety::{
    x_discharge_resistor, y_capacitor_touch_current, DischargeResistor, DischargeSpec,
};
use crate::units::validate::{non_negative, positive};
use crate::units::{
    si, Capacitance, DbReference, Decibel, ElectricCurrent, ElectricPotential,
    ElectricalResistance, Frequency, Inductance, Power, Quantity, Time,
};
use std::f64::consts::PI;
use std::fmt::Write;

/// Everything the input filter design needs: the converter's waveforms and input parts, the
/// target, and the constraints on the filter parts.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct InputFilterSpec {
    /// Switching frequency (10 kHz … 2 MHz).
    pub switching_frequency: Frequency,
    /// Primary current over a period (differential-mode source).
    pub primary_current: PrimaryCurrentShape,
    /// Drain voltage over a period (common-mode source).
    pub drain_voltage: DrainVoltageShape,
    /// Bulk capacitance.
    pub bulk_capacitance: Capacitance,
    /// Bulk capacitor ESR at the switching frequency.
    pub bulk_esr: ElectricalResistance,
    /// Bulk capacitor ESL.
    pub bulk_esl: Inductance,
    /// Parasitic capacitance from the drain node to earth.
    pub parasitic_capacitance: Capacitance,
    /// CISPR 32 class to meet.
    pub class: EmissionClass,
    /// Margin under the limit to design for (a ratio in dB, 0 … 40 dB, e.g. 6 dB).
    pub margin: Decibel,
    /// Number of DM LC stages, 1 or 2.
    pub stages: u32,
    /// X capacitance of each DM stage.
    pub x_capacitance: Capacitance,
    /// Series resistance of each DM inductor.
    pub inductor_resistance: ElectricalResistance,
    /// Largest total Y capacitance the touch-current limit allows (from the safety work);
    /// zero for none.
    pub max_y_capacitance: Capacitance,
    /// Lowest DC input (bulk) voltage at full power, for Middlebrook's criterion.
    pub minimum_input_voltage: ElectricPotential,
    /// Converter input power at full load.
    pub input_power: Power,
    /// Margin between |R_N| and the filter output impedance (a ratio in dB, e.g. 6 dB).
    pub middlebrook_margin: Decibel,
    /// Highest line voltage (RMS), for the X capacitor discharge and the touch current.
    pub maximum_line_voltage: ElectricPotential,
    /// Line frequency for the touch current (60 Hz is the worst case of 50/60 Hz).
    pub line_frequency: Frequency,
    /// Time allowed for the X capacitance to discharge after unplugging.
    pub discharge_time: Time,
    /// Voltage the X capacitance must fall to within `discharge_time`.
    pub discharge_voltage: ElectricPotential,
}

impl InputFilterSpec {
    /// The differential-mode part of the spec.
    pub fn differential_mode(&self) -> DifferentialModeSpec {
        DifferentialModeSpec {
            switching_frequency: self.switching_frequency,
            primary_current: self.primary_current,
            bulk_capacitance: self.bulk_capacitance,
            bulk_esr: self.bulk_esr,
            bulk_esl: self.bulk_esl,
        }
    }
    /// The common-mode part of the spec.
    pub fn common_mode(&self) -> CommonModeSpec {
        CommonModeSpec {
            switching_frequency: self.switching_frequency,
            drain_voltage: self.drain_voltage,
            parasitic_capacitance: self.parasitic_capacitance,
        }
    }
}

/// One harmonic of the design: estimate, limit and margin without and with the filter.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HarmonicRow {
    /// Harmonic number.
    pub harmonic: u32,
    /// Frequency.
    pub frequency: Frequency,
    /// Differential-mode part of the unfiltered estimate.
    pub differential_unfiltered: Decibel,
    /// Common-mode part of the unfiltered estimate (no Y capacitor, no choke).
    pub common_unfiltered: Decibel,
    /// Unfiltered estimate (DM and CM added in phase).
    pub estimate_unfiltered: Decibel,
    /// Quasi-peak limit.
    pub limit_quasi_peak: Decibel,
    /// Average limit.
    pub limit_average: Decibel,
    /// Attenuation needed: estimate − stricter limit + margin.
    pub required_attenuation: Decibel,
    /// Margin to the stricter limit without the filter (negative: over the limit).
    pub margin_unfiltered: Decibel,
    /// Estimate with the designed filter.
    pub estimate_filtered: Decibel,
    /// Margin to the stricter limit with the filter.
    pub margin_filtered: Decibel,
}

crate::serialize_as_record!(HarmonicRow);

impl Record for HarmonicRow {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::new("harmonic", i64::from(self.harmonic)),
            Field::quantity("frequency", self.frequency),
            Field::new("differential_unfiltered", self.differential_unfiltered),
            Field::new("common_unfiltered", self.common_unfiltered),
            Field::new("estimate_unfiltered", self.estimate_unfiltered),
            Field::new("limit_quasi_peak", self.limit_quasi_peak),
            Field::new("limit_average", self.limit_average),
            Field::new("margin_unfiltered", self.margin_unfiltered),
            Field::new("required_attenuation", self.required_attenuation),
            Field::new("estimate_filtered", self.estimate_filtered),
            Field::new("margin_filtered", self.margin_filtered),
        ]
    }
}

/// The designed input filter and its evaluation.
#[derive(Clone, Debug, PartialEq)]
pub struct InputFilterDesign {
    /// The spec it was designed for.
    pub spec: InputFilterSpec,
    /// Every in-band harmonic.
    pub harmonics: Vec<HarmonicRow>,
    /// DM LC stages, from the converter towards the line (empty when none is needed).
    pub differential_stages: Vec<FilterStage>,
    /// Corner frequency of each DM stage (with its X capacitor).
    pub differential_corner: Option<Frequency>,
    /// Y capacitance used (the allowed maximum; zero for none).
    pub y_capacitance: Capacitance,
    /// Common-mode choke inductance (None when the Y capacitance alone suffices).
    pub choke_inductance: Option<Inductance>,
    /// Corner of the choke with the Y capacitance.
    pub common_corner: Option<Frequency>,
    /// Worst margin without the filter.
    pub worst_margin_unfiltered: Decibel,
    /// Worst margin with the filter.
    pub worst_margin_filtered: Decibel,
    /// Frequency of the worst filtered margin.
    pub worst_frequency: Frequency,
    /// Peak output impedance seen by the converter (the DM inductors in series with the bulk
    /// capacitor, line side shorted).
    pub output_impedance_peak: Option<ImpedancePeak>,
    /// Middlebrook's criterion with that peak.
    pub middlebrook: Option<MiddlebrookCheck>,
    /// The parallel R–C damping network across the bulk capacitor, Erickson's optimum for the
    /// smallest capacitance ratio n (0.25 … 16) that meets the Middlebrook margin on its own
    /// (useful when the bulk ESR is low); None when there is no DM stage or when even n = 16
    /// would not meet it (then lower the DM inductance or raise the bulk capacitance).
    pub damping: Option<DampingNetwork>,
    /// The X capacitors' discharge resistor.
    pub x_discharge: DischargeResistor,
    /// Touch current of the Y capacitance at the highest line voltage and line frequency.
    pub y_touch_current: ElectricCurrent,
}

fn db(x: f64) -> Decibel {
    Decibel::ratio(x)
}

struct Evaluated {
    dm: Vec<f64>,
    cm: Vec<f64>,
}

fn evaluate(
    dm: &CheckedDm,
    cm: &CheckedCm,
    ns: &[u32],
    stages: &[FilterStage],
    y: Option<f64>,
    choke: Option<f64>,
) -> Result<Evaluated> {
    Ok(Evaluated {
        dm: ns
            .iter()
            .map(|&n| finite_level(dm.receiver_voltage(stages, n), "differential-mode"))
            .collect::<Result<_>>()?,
        cm: ns
            .iter()
            .map(|&n| finite_level(cm.receiver_voltage(y, choke, n), "common-mode"))
            .collect::<Result<_>>()?,
    })
}

/// A receiver voltage (peak volts) must be a finite number: an overflow is an error, never a
/// level shown as the floor.
pub(crate) fn finite_level(v: f64, mode: &str) -> Result<f64> {
    if v.is_finite() {
        Ok(v)
    } else {
        Err(Error::out_of_range(format!(
            "the {mode} noise estimate overflows: the converter's currents (A), voltages (V) or \
             parts (F, H, Ω) are far outside anything this estimate covers"
        )))
    }
}

/// Largest DM inductance per stage the design will propose, henries (50 mH): beyond it the
/// filter is not one a 5–75 W supply is built with, and the design is reported as infeasible
/// (common practice, no published source).
pub const MAX_DIFFERENTIAL_INDUCTANCE_H: f64 = 50e-3;
/// Largest common-mode choke inductance the design will propose, henries (200 mH), for the
/// same reason (common practice, no published source).
pub const MAX_CHOKE_INDUCTANCE_H: f64 = 200e-3;

/// The error of an inductance the design cannot reasonably propose.
fn too_large(what: &str, key_hint: &str, max: f64) -> Error {
    Error::infeasible(format!(
        "the {what} would need more than {} mH, more than this design proposes; {key_hint}",
        crate::units::format_number(max * 1e3)
    ))
}

/// Smallest capacitance ratio the design proposes for the R–C damping network (n = 0.25).
const MIN_DAMPING_RATIO: f64 = 0.25;
/// Largest capacitance ratio the design proposes (n = 16: the blocking capacitor would be
/// sixteen bulk capacitors); beyond it no damping network is proposed.
const MAX_DAMPING_RATIO: f64 = 16.0;

/// The smallest n = C_d/C whose optimally damped peak R0·√(2(2+n))/n is at most `allowed`:
/// the positive root of allowed²·n² − 2R0²·n − 4R0² = 0,
/// n = (R0² + R0·√(R0² + 4·allowed²))/allowed². None when it exceeds [`MAX_DAMPING_RATIO`].
fn smallest_damping_ratio(r0: f64, allowed: f64) -> Option<f64> {
    let n = (r0 * r0 + r0 * (r0 * r0 + 4.0 * allowed * allowed).sqrt()) / (allowed * allowed);
    (n.is_finite() && n <= MAX_DAMPING_RATIO).then_some(n)
}

/// Worst excess (dB) of `levels` (peak volts) over the per-harmonic targets (dBµV).
fn worst_excess(levels: &[f64], targets: &[f64]) -> f64 {
    levels
        .iter()
        .zip(targets)
        .map(|(v, t)| level_of_peak(*v).value - t)
        .fold(f64::NEG_INFINITY, f64::max)
}

/// Corner frequency for the largest attenuation need: min over n of f_n·10^(−A_n/(20·order)).
fn corner_for(levels: &[f64], targets: &[f64], freqs: &[f64], order: f64) -> Option<f64> {
    levels
        .iter()
        .zip(targets)
        .zip(freqs)
        .filter_map(|((v, t), f)| {
            let a = level_of_peak(*v).value - t;
            (a > 0.0).then(|| f * 10f64.powf(-a / (20.0 * order)))
        })
        .fold(None, |m: Option<f64>, x| Some(m.map_or(x, |m| m.min(x))))
}

/// Designs the input filter a converter needs to meet a CISPR 32 class with margin.
///
/// Method:
/// 1. Estimate DM ([`super::differential_mode_noise`]) and CM ([`super::common_mode_noise`],
///    bare: no Y, no choke) at every harmonic in 150 kHz … 30 MHz. The total is their in-phase
///    (worst-case) sum. The limit is the stricter of quasi-peak and average (a harmonic is a
///    steady sine, which both detectors read alike).
/// 2. Each mode is given the target limit − margin − 6 dB, so that the two together meet
///    limit − margin even in phase.
/// 3. DM: the needed attenuation A_n sets the corner f_c = min f_n·10^(−A_n/(40·stages));
///    each stage gets L = 1/((2πf_c)²·C_x) with the given X capacitance. CM: with the allowed
///    Y capacitance, L_cm = 1/((2πf_c)²·C_y) with f_c = min f_n·10^(−A_n/40) from the bare
///    CM estimate. Both are then evaluated on the full circuit (LISN, bulk capacitor, stages)
///    and the inductances raised until every harmonic meets its target (at most 40 steps).
/// 4. Damping: the DM inductance resonates with the bulk capacitor (near that resonance the X
///    capacitors are open, so with two stages both inductors count, in series); the peak
///    output impedance (bulk ESR and inductor resistances as the only damping) is checked
///    with Middlebrook's criterion against |R_N| = V_in,min²/P_in, and the parallel R–C
///    damping network (Erickson's optimum) with the smallest ratio n = C_d/C that alone meets
///    the margin is given: n = (R0² + R0·√(R0² + 4·Z_max²))/Z_max², Z_max = |R_N|/margin,
///    at least 0.25 and none above 16.
/// 5. X discharge resistor for the total X capacitance; touch current of the Y capacitance.
///
/// Valid: 1 or 2 stages; switching frequency 10 kHz … 2 MHz; all parts positive.
/// Errors (infeasible): a DM stage above [`MAX_DIFFERENTIAL_INDUCTANCE_H`] or a choke above
/// [`MAX_CHOKE_INDUCTANCE_H`] would be needed, naming the inputs that would help; an estimate
/// that overflows is an out-of-range error, never a level shown at the floor.
/// References: CISPR 32:2015 Tables A.9/A.10 (limits); CISPR 16-1-2 (LISN); Erickson &
/// Maksimović, *Fundamentals of Power Electronics*, 3rd ed. (2020), input filter chapter;
/// Middlebrook (1976). The 6 dB split between DM and CM is common practice, no published
/// source.
pub fn input_filter_design(spec: &InputFilterSpec) -> Result<InputFilterDesign> {
    let dm = spec.differential_mode().checked()?;
    let cm = spec.common_mode().checked()?;
    if spec.margin.reference != DbReference::Ratio
        || !(spec.margin.value.is_finite() && (0.0..=40.0).contains(&spec.margin.value))
    {
        return Err(Error::out_of_range(format!(
            "`margin` must be a ratio of 0 … 40 dB under the limit, got {}",
            spec.margin
        )));
    }
    if !(1..=2).contains(&spec.stages) {
        return Err(Error::out_of_range(format!(
            "`stages` must be 1 or 2, got {}",
            spec.stages
        )));
    }
    let cx = positive("x_capacitance", spec.x_capacitance)?.value;
    let rl = non_negative("inductor_resistance", spec.inductor_resistance)?.value;
    // zero: no Y capacitor (a choke alone then hardly helps, see the CM step)
    let cy_value = non_negative("max_y_capacitance", spec.max_y_capacitance)?.value;
    let cy = (cy_value > 0.0).then_some(cy_value);
    positive("minimum_input_voltage", spec.minimum_input_voltage)?;
    positive("input_power", spec.input_power)?;

    let ns: Vec<u32> = in_band_harmonics(dm.fsw).collect();
    let freqs: Vec<f64> = ns.iter().map(|&n| dm.fsw * f64::from(n)).collect();
    let mut qp = Vec::with_capacity(ns.len());
    let mut av = Vec::with_capacity(ns.len());
    for f in &freqs {
        qp.push(emi_limit(si(*f), spec.class, Detector::QuasiPeak)?.value);
        av.push(emi_limit(si(*f), spec.class, Detector::Average)?.value);
    }
    let limit: Vec<f64> = qp.iter().zip(&av).map(|(a, b)| a.min(*b)).collect();
    let targets: Vec<f64> = limit
        .iter()
        .map(|l| l - spec.margin.value - 20.0 * 2f64.log10())
        .collect();

    let bare = evaluate(&dm, &cm, &ns, &[], None, None)?;

    // differential mode
    let order = 2.0 * f64::from(spec.stages);
    let mut stages: Vec<FilterStage> = Vec::new();
    let mut dm_corner = None;
    if let Some(fc) = corner_for(&bare.dm, &targets, &freqs, order) {
        let mut l = 1.0 / ((2.0 * PI * fc).powi(2) * cx);
        let build = |l: f64| -> Vec<FilterStage> {
            (0..spec.stages)
                .map(|_| FilterStage {
                    inductance: si(l),
                    inductor_resistance: si(rl),
                    capacitance: si(cx),
                })
                .collect()
        };
        let hint = "raise `x_capacitance` (F), use `stages: 2`, lower `margin` (dB) or check the \
                    converter's `peak_current` (A)";
        let mut met = false;
        for _ in 0..60 {
            if !(l.is_finite() && l <= MAX_DIFFERENTIAL_INDUCTANCE_H) {
                return Err(too_large(
                    "differential-mode filter",
                    hint,
                    MAX_DIFFERENTIAL_INDUCTANCE_H,
                ));
            }
            let levels: Vec<f64> = ns
                .iter()
                .map(|&n| finite_level(dm.receiver_voltage(&build(l), n), "differential-mode"))
                .collect::<Result<_>>()?;
            let e = worst_excess(&levels, &targets);
            if e <= 0.0 {
                met = true;
                break;
            }
            l *= 10f64.powf(e.max(0.5) / (20.0 * order));
        }
        if !met {
            return Err(Error::infeasible(format!(
                "no differential-mode inductance up to {} mH meets the target at every harmonic; {hint}",
                crate::units::format_number(MAX_DIFFERENTIAL_INDUCTANCE_H * 1e3)
            )));
        }
        stages = build(l);
        dm_corner = Some(si(1.0 / (2.0 * PI * (l * cx).sqrt())));
    }

    // common mode: the Y capacitance first, a choke if it is not enough
    let with_y: Vec<f64> = ns
        .iter()
        .map(|&n| finite_level(cm.receiver_voltage(cy, None, n), "common-mode"))
        .collect::<Result<_>>()?;
    let mut choke = None;
    let mut cm_corner = None;
    if worst_excess(&with_y, &targets) > 0.0 {
        if let Some(fc) = corner_for(&bare.cm, &targets, &freqs, 2.0) {
            // without a Y capacitor the choke only adds to a path that the small parasitic
            // capacitance already dominates; start from 1 mH and let the loop find out
            let mut l = cy.map_or(1e-3, |cy| 1.0 / ((2.0 * PI * fc).powi(2) * cy));
            let hint = "raise `max_y_capacitance` (F) if the touch-current budget allows, lower \
                        `parasitic_capacitance` (F) (a shield or a lower-capacitance mounting), \
                        slow the drain edges (`rise_time`, s) or lower `margin` (dB)";
            let mut met = false;
            for _ in 0..60 {
                if !(l.is_finite() && l <= MAX_CHOKE_INDUCTANCE_H) {
                    return Err(too_large("common-mode choke", hint, MAX_CHOKE_INDUCTANCE_H));
                }
                let levels: Vec<f64> = ns
                    .iter()
                    .map(|&n| finite_level(cm.receiver_voltage(cy, Some(l), n), "common-mode"))
                    .collect::<Result<_>>()?;
                let e = worst_excess(&levels, &targets);
                if e <= 0.0 {
                    met = true;
                    break;
                }
                l *= 10f64.powf(e.max(0.5) / 40.0);
            }
            if !met {
                return Err(Error::infeasible(format!(
                    "no common-mode choke up to {} mH meets the target at every harmonic; {hint}",
                    crate::units::format_number(MAX_CHOKE_INDUCTANCE_H * 1e3)
                )));
            }
            choke = Some(l);
            cm_corner = cy.map(|cy| si(1.0 / (2.0 * PI * (l * cy).sqrt())));
        }
    }

    let filtered = evaluate(&dm, &cm, &ns, &stages, cy, choke)?;
    let mut rows = Vec::with_capacity(ns.len());
    for i in 0..ns.len() {
        let lim = limit[i];
        let un = level_of_peak(bare.dm[i] + bare.cm[i]);
        let fi = level_of_peak(filtered.dm[i] + filtered.cm[i]);
        rows.push(HarmonicRow {
            harmonic: ns[i],
            frequency: si(freqs[i]),
            differential_unfiltered: level_of_peak(bare.dm[i]),
            common_unfiltered: level_of_peak(bare.cm[i]),
            estimate_unfiltered: un,
            limit_quasi_peak: Decibel {
                value: qp[i],
                reference: DbReference::MicroVolt,
            },
            limit_average: Decibel {
                value: av[i],
                reference: DbReference::MicroVolt,
            },
            required_attenuation: db(un.value - lim + spec.margin.value),
            margin_unfiltered: db(lim - un.value),
            estimate_filtered: fi,
            margin_filtered: db(lim - fi.value),
        });
    }
    let worst_un = rows
        .iter()
        .map(|r| r.margin_unfiltered.value)
        .fold(f64::INFINITY, f64::min);
    let worst = rows
        .iter()
        .min_by(|a, b| a.margin_filtered.value.total_cmp(&b.margin_filtered.value))
        .ok_or_else(|| Error::invalid("no harmonic of the switching frequency lies in the band"))?;

    // damping and Middlebrook's criterion
    // Near the bulk capacitor's resonance with the filter the X capacitors are open, so the
    // converter sees every stage's inductance (and resistance) in series.
    let (peak, middlebrook, damping) = if stages.is_empty() {
        (None, None, None)
    } else {
        let l_total: Inductance = si(stages.iter().map(|s| s.inductance.value).sum::<f64>());
        let r_total: ElectricalResistance = si(stages
            .iter()
            .map(|s| s.inductor_resistance.value)
            .sum::<f64>());
        let peak = filter_output_impedance_peak(
            l_total,
            r_total,
            spec.bulk_capacitance,
            spec.bulk_esr,
            None,
        )?;
        let mb = middlebrook_criterion(
            peak.magnitude,
            spec.minimum_input_voltage,
            spec.input_power,
            spec.middlebrook_margin,
        )?;
        let allowed =
            mb.negative_input_resistance.value / 10f64.powf(spec.middlebrook_margin.value / 20.0);
        let r0 = (l_total.value / spec.bulk_capacitance.value).sqrt();
        let net = match smallest_damping_ratio(r0, allowed) {
            Some(n) => Some(damping_network(
                l_total,
                spec.bulk_capacitance,
                n.max(MIN_DAMPING_RATIO),
            )?),
            None => None,
        };
        (Some(peak), Some(mb), net)
    };

    let total_x: Capacitance = si(cx * stages.len().max(1) as f64);
    let x_discharge = x_discharge_resistor(&DischargeSpec {
        x_capacitance: total_x,
        mains_voltage: spec.maximum_line_voltage,
        discharge_time: spec.discharge_time,
        residual_voltage_limit: spec.discharge_voltage,
    })?;
    let y_touch_current = match cy {
        Some(_) => y_capacitor_touch_current(
            spec.max_y_capacitance,
            spec.maximum_line_voltage,
            spec.line_frequency,
        )?,
        None => si(0.0),
    };
    Ok(InputFilterDesign {
        spec: *spec,
        worst_margin_unfiltered: db(worst_un),
        worst_margin_filtered: worst.margin_filtered,
        worst_frequency: worst.frequency,
        harmonics: rows,
        differential_stages: stages,
        differential_corner: dm_corner,
        y_capacitance: spec.max_y_capacitance,
        choke_inductance: choke.map(si),
        common_corner: cm_corner,
        output_impedance_peak: peak,
        middlebrook,
        damping,
        x_discharge,
        y_touch_current,
    })
}

crate::serialize_as_record!(InputFilterDesign);

impl Record for InputFilterDesign {
    fn fields(&self) -> Vec<Field> {
        let zero_h: Inductance = si(0.0);
        let mut f = vec![
            Field::new("class", self.spec.class.to_string()),
            Field::new("target_margin", self.spec.margin),
            Field::new("worst_margin_unfiltered", self.worst_margin_unfiltered),
            Field::new("worst_margin_filtered", self.worst_margin_filtered),
            Field::quantity("worst_frequency", self.worst_frequency),
            Field::new("stages", self.differential_stages.len() as i64),
            Field::quantity(
                "differential_inductance",
                self.differential_stages
                    .first()
                    .map_or(zero_h, |s| s.inductance),
            ),
            Field::quantity("x_capacitance", self.spec.x_capacitance),
        ];
        if let Some(c) = self.differential_corner {
            f.push(Field::quantity("differential_corner", c));
        }
        f.push(Field::quantity(
            "choke_inductance",
            self.choke_inductance.unwrap_or(zero_h),
        ));
        f.push(Field::quantity("y_capacitance", self.y_capacitance));
        if let Some(c) = self.common_corner {
            f.push(Field::quantity("common_corner", c));
        }
        if let Some(p) = self.output_impedance_peak {
            f.push(Field::quantity("output_impedance_peak", p.magnitude));
            f.push(Field::quantity(
                "output_impedance_peak_frequency",
                p.frequency,
            ));
        }
        if let Some(m) = self.middlebrook {
            f.push(Field::quantity(
                "negative_input_resistance",
                m.negative_input_resistance,
            ));
            f.push(Field::new("middlebrook_margin", m.margin));
            f.push(Field::new("middlebrook_satisfied", m.satisfied));
        }
        if let Some(d) = self.damping {
            f.push(Field::quantity("damping_resistance", d.damping_resistance));
            f.push(Field::quantity(
                "damping_capacitance",
                d.blocking_capacitance,
            ));
        }
        f.push(Field::quantity(
            "discharge_resistance",
            self.x_discharge.resistance,
        ));
        f.push(Field::quantity(
            "discharge_loss",
            self.x_discharge.standby_loss,
        ));
        f.push(Field::quantity("y_touch_current", self.y_touch_current));
        f
    }
}

/// The harmonic table: the first `rows` in-band harmonics, plus the harmonic with the worst
/// margin without and with the filter when not among them (0 rows: every harmonic).
pub fn harmonic_table(design: &InputFilterDesign, rows: usize) -> Table {
    let mut t = Table::new();
    let n = if rows == 0 {
        design.harmonics.len()
    } else {
        rows
    };
    let mut picked: Vec<usize> = (0..n.min(design.harmonics.len())).collect();
    let worst = |key: fn(&HarmonicRow) -> f64| {
        (0..design.harmonics.len())
            .min_by(|&a, &b| key(&design.harmonics[a]).total_cmp(&key(&design.harmonics[b])))
    };
    for w in [
        worst(|r| r.margin_unfiltered.value),
        worst(|r| r.margin_filtered.value),
    ]
    .into_iter()
    .flatten()
    {
        if !picked.contains(&w) {
            picked.push(w);
        }
    }
    picked.sort_unstable();
    for i in picked {
        t.push_row(design.harmonics[i].fields());
    }
    t
}

/// The design checks: the worst filtered margin against the target margin
/// (`conducted_emission_margin`, at least, in dB), and the filter's peak output impedance
/// against |R_N| reduced by the Middlebrook margin (`input_filter_damping`, at most), and the
/// Y capacitance's touch current against the ES1 limit (`y_capacitor_touch_current`, at most;
/// IEC 62368-1:2018, value recalled from memory, see `crate::safety::tables`). The last two
/// are listed as not applicable, with the reason, without a filter stage or a Y capacitance.
/// Reference: CISPR 32:2015 limits with the house margin; Middlebrook (1976).
pub fn input_filter_checks(design: &InputFilterDesign) -> Result<Vec<CheckResult>> {
    let margin = Rule::new(
        "conducted_emission_margin",
        "worst conducted emission margin under the CISPR 32 limit, in dB",
        "CISPR 32:2015 Tables A.9/A.10 with the design margin",
        Comparison::AtLeast,
        Quantity::number(design.spec.margin.value),
        0.0,
    )?;
    let mut out = vec![margin.check(Quantity::number(design.worst_margin_filtered.value))?];
    // both checks are always listed; where they do not apply they say why
    let damping = |allowed: f64| {
        Rule::new(
            "input_filter_damping",
            "peak filter output impedance under |R_N| with the Middlebrook margin",
            "Middlebrook, IEEE IAS 1976; Erickson & Maksimović 2020, input filter chapter",
            Comparison::AtMost,
            Quantity::from_typed::<ElectricalResistance>(si(allowed)),
            0.05,
        )
    };
    if let (Some(p), Some(m)) = (design.output_impedance_peak, design.middlebrook) {
        let allowed =
            m.negative_input_resistance.value / 10f64.powf(m.required_margin.value / 20.0);
        out.push(damping(allowed)?.check(Quantity::from_typed(p.magnitude))?);
    } else {
        out.push(damping(0.0)?.not_applicable(
            Quantity::from_typed::<ElectricalResistance>(si(0.0)),
            "no differential-mode filter stage, so no filter output impedance meets the converter's negative input resistance",
        ));
    }
    let source = TOUCH_CURRENT_SOURCE.cite();
    let touch = Rule::new(
        "y_capacitor_touch_current",
        "touch current of the Y capacitance at the highest line voltage and frequency",
        &source,
        Comparison::AtMost,
        Quantity::from_typed::<ElectricCurrent>(si(TOUCH_CURRENT_ES1)),
        0.1,
    )?;
    if design.y_capacitance.value > 0.0 {
        out.push(touch.check(Quantity::from_typed(design.y_touch_current))?);
    } else {
        out.push(touch.not_applicable(
            Quantity::from_typed(design.y_touch_current),
            "no Y capacitance across the barrier, so it carries no touch current",
        ));
    }
    Ok(out)
}

/// A Markdown report of the design: the summary, the harmonic table (first `rows` harmonics
/// plus the worst), the checks and the safety caution.
pub fn input_filter_report(design: &InputFilterDesign, rows: usize) -> Result<String> {
    let mut s = String::new();
    let _ = writeln!(s, "# Conducted EMI input filter\n");
    let _ = writeln!(s, "{SAFETY_CAUTION}\n");
    let _ = writeln!(s, "## Design\n");
    for f in design.fields() {
        let _ = writeln!(s, "- {}: {}", f.name, f.value);
    }
    let _ = writeln!(
        s,
        "\n## Harmonics\n\n```\n{}```\n",
        harmonic_table(design, rows).to_text()
    );
    let _ = writeln!(s, "## Checks\n");
    for c in input_filter_checks(design)? {
        if c.status == crate::rules::Status::NotApplicable {
            let _ = writeln!(s, "- {} {}: {}", c.status, c.id, c.description);
            continue;
        }
        let _ = writeln!(
            s,
            "- {} {}: {} ({} {}) [{}]",
            c.status,
            c.id,
            c.value,
            c.comparison.as_str(),
            c.limit_text(),
            c.reference
        );
    }
    if !design.differential_stages.is_empty() && design.damping.is_none() {
        let _ = writeln!(
            s,
            "\nNo R–C damping network with a blocking capacitor up to 16 × the bulk capacitance \
             meets the Middlebrook margin: lower the DM inductance or raise the bulk capacitance."
        );
    }
    let _ = writeln!(
        s,
        "\nEstimates are first-order (lumped parasitics, in-phase DM+CM sum); confirm with a \
         conducted emission scan. The filter parts are ideal (no choke winding capacitance, \
         no capacitor ESL), so filtered levels above a few MHz are optimistic. Levels below {} \
         dBµV are shown as that floor.",
        super::LEVEL_FLOOR
    );
    Ok(s)
}

//! Regulation of a flyback design: divider, bias, compensation, and the loop's margins at every
//! line/load corner and both CTR extremes, checked against the regulation rule book.

use super::bias::{optocoupler_bias, BiasSpec, FeedbackInput, Optocoupler, OptocouplerBias};
use super::compensation::{
    compensation_type2, margins_of, CompensationTarget, Type2Design, Type2Network,
};
use super::divider::{output_divider, OutputDivider, OutputDividerSpec, ShuntReference};
use super::margins::LoopMargins;
use super::overvoltage::{bias_zener_trip, BiasZenerSpec, BiasZenerTrip};
use super::plant::LoopPlant;
use crate::error::{Error, Result};
use crate::flyback::{ConductionMode, FlybackDesign, FlybackSpec};
use crate::passives::ESeries;
use crate::report::{Field, Record, Table};
use crate::rules::{worst_status, CheckResult, Comparison, Rule, RuleBook, Status};
use crate::units::validate::{number_within, positive};
use crate::units::{si, ElectricCurrent, ElectricPotential, Frequency, Quantity};

/// Frequencies per loop analysis unless asked otherwise.
pub const DEFAULT_POINTS: usize = 200;
/// Default crossover as a fraction of the lowest RHP zero (common practice, no published
/// source; Basso (2012) advises staying well below it).
pub const DEFAULT_CROSSOVER_RHP_FRACTION: f64 = 0.15;
/// Default crossover cap as a fraction of the switching frequency (common practice, no
/// published source).
pub const DEFAULT_CROSSOVER_SWITCHING_FRACTION: f64 = 0.05;

/// Phase margin short of the target that [`flyback_regulation`] accepts before lowering the
/// zero, degrees.
pub const ZERO_PLACEMENT_TOLERANCE_DEG: f64 = 1.0;
/// Most placements of the zero [`flyback_regulation`] tries.
pub const MAX_ZERO_PLACEMENTS: usize = 8;

/// The corners of a flyback design the loop is analysed at (the current-limit corners are out
/// of regulation).
pub const LOOP_CORNERS: [&str; 4] = [
    "low_line_full_load",
    "low_line_light_load",
    "high_line_full_load",
    "high_line_light_load",
];

/// A bias-winding Zener for output over-voltage protection (the turns ratio comes from the
/// design's bias winding).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct OvervoltageZener {
    /// Zener voltage.
    pub zener_voltage: ElectricPotential,
    /// Its relative tolerance.
    pub zener_tolerance: f64,
    /// Protection input threshold in series.
    pub trip_threshold: ElectricPotential,
    /// Largest bias overshoot by peak charging.
    pub bias_overshoot_max: f64,
}

/// How to regulate a flyback design.
#[derive(Clone, Debug, PartialEq)]
pub struct RegulationSpec {
    /// The shunt reference.
    pub reference: ShuntReference,
    /// The optocoupler.
    pub optocoupler: Optocoupler,
    /// The controller's feedback input.
    pub feedback: FeedbackInput,
    /// Current in the lower divider resistor.
    pub divider_current: ElectricCurrent,
    /// Series of the resistors.
    pub resistor_series: ESeries,
    /// Relative tolerance of the divider resistors.
    pub resistor_tolerance: f64,
    /// Series of the capacitors.
    pub capacitor_series: ESeries,
    /// Trim the divider with a third resistor when it helps.
    pub trim: bool,
    /// LED current headroom at zero duty and `ctr_min`.
    pub bias_headroom: f64,
    /// A separate DC rail for the LED resistor, which cuts the fast lane (a zero resistor then
    /// sets the gain); None: the output feeds it.
    pub led_supply_voltage: Option<ElectricPotential>,
    /// Crossover target at `ctr_max` on the design corner; None: the default
    /// ([`DEFAULT_CROSSOVER_RHP_FRACTION`] of the lowest RHP zero, at most
    /// [`DEFAULT_CROSSOVER_SWITCHING_FRACTION`] of the switching frequency).
    pub crossover_frequency: Option<Frequency>,
    /// Target phase margin, degrees.
    pub phase_margin: f64,
    /// Slope compensation as a fraction of the primary off-slope.
    pub ramp_fraction: f64,
    /// Frequencies per analysis.
    pub points: usize,
    /// Over-voltage protection by a bias-winding Zener, if fitted.
    pub overvoltage: Option<OvervoltageZener>,
    /// Rule limits overridden by id.
    pub rule_limits: Vec<(String, Quantity)>,
}

impl Default for RegulationSpec {
    /// A generic 2.5 V reference, a CTR 50–200 % optocoupler, a 5 V / 20 kΩ pull-up feedback
    /// pin, 250 µA divider, E96 ±1 % resistors, E12 capacitors, trim allowed, 20 % headroom,
    /// 60° phase margin, a ramp of half the off-slope, 200 frequencies, no over-voltage Zener.
    fn default() -> Self {
        Self {
            reference: ShuntReference::generic_2v5(),
            optocoupler: Optocoupler::generic(),
            feedback: FeedbackInput::generic_pull_up(),
            divider_current: si(250e-6),
            resistor_series: ESeries::E96,
            resistor_tolerance: 0.01,
            capacitor_series: ESeries::E12,
            trim: true,
            bias_headroom: 0.2,
            led_supply_voltage: None,
            crossover_frequency: None,
            phase_margin: 60.0,
            ramp_fraction: 0.5,
            points: DEFAULT_POINTS,
            overvoltage: None,
            rule_limits: Vec::new(),
        }
    }
}

/// One loop analysis: a corner at one CTR extreme.
#[derive(Clone, Debug, PartialEq)]
pub struct LoopCase {
    /// Corner name.
    pub corner: String,
    /// `ctr_min` or `ctr_max`.
    pub ctr_case: &'static str,
    /// The CTR.
    pub ctr: f64,
    /// The plant at the corner.
    pub plant: LoopPlant,
    /// The margins found.
    pub margins: LoopMargins,
}

/// The regulation of a flyback design.
#[derive(Clone, Debug, PartialEq)]
pub struct Regulation {
    /// The output divider.
    pub divider: OutputDivider,
    /// The shunt-reference and optocoupler bias, with the compensation's LED resistor.
    pub bias: OptocouplerBias,
    /// The type-2 compensation.
    pub compensation: Type2Design,
    /// Corner the compensation was placed at.
    pub design_corner: String,
    /// Every corner at both CTR extremes.
    pub cases: Vec<LoopCase>,
    /// Over-voltage trip, if a Zener is fitted.
    pub overvoltage: Option<BiasZenerTrip>,
    /// The rule book used.
    pub rules: RuleBook,
    /// Rule results.
    pub checks: Vec<CheckResult>,
}

/// The loop's plant at a corner of a flyback design.
///
/// Reads the corner's mode, duty cycle, bulk valley, peak and valley current and load power,
/// the design's inductance, reflected voltage, switching frequency and the regulated output's
/// turns ratio, and the spec's output capacitor, ESR and post filter. The load is
/// R = V_out²/P_out (every output folded onto the regulated one).
/// Errors: an unknown corner (the message lists the names).
pub fn loop_plant_from_flyback(
    design: &FlybackDesign,
    spec: &FlybackSpec,
    corner: &str,
    ramp_fraction: f64,
) -> Result<LoopPlant> {
    let c = design.corner(corner).ok_or_else(|| {
        let names: Vec<&str> = design.corners.iter().map(|c| c.corner.as_str()).collect();
        Error::unknown(format!(
            "`corner` = \"{corner}\" is not a corner of this design; expected one of {}",
            names.join(", ")
        ))
    })?;
    let k = spec.regulated_output;
    let o = spec
        .outputs
        .get(k)
        .ok_or_else(|| Error::invalid("the spec has no regulated output"))?;
    let n = *design
        .turns_ratios
        .get(k)
        .ok_or_else(|| Error::invalid("the design has no turns ratio for the regulated output"))?;
    let p = c.output_power.value;
    let plant = LoopPlant {
        corner: corner.to_string(),
        mode: match c.mode {
            ConductionMode::Continuous => ConductionMode::Continuous,
            _ => ConductionMode::Discontinuous,
        },
        switching_frequency: design.switching_frequency,
        input_voltage: c.bulk_valley_voltage,
        reflected_voltage: design.reflected_voltage,
        turns_ratio: n,
        primary_inductance: design.primary_inductance,
        duty_cycle: c.duty_cycle,
        output_voltage: o.voltage,
        load_resistance: si(o.voltage.value * o.voltage.value / p),
        primary_current_peak: c.primary_current_peak,
        primary_current_valley: c.primary_current_valley,
        output_capacitance: o.capacitance,
        output_esr: o.esr,
        post_filter: o.post_filter_inductance.zip(o.post_filter_capacitance),
        ramp_fraction,
    };
    plant.validate()?;
    Ok(plant)
}

/// The regulation rule book with `rule_limits` applied.
///
/// | id | checks | default limit | reference |
/// |---|---|---|---|
/// | `phase_margin_minimum` | smallest phase margin over corners and CTR extremes, degrees | at least 45 | common practice, no published source (Basso 2012 advises 45–70°) |
/// | `gain_margin_minimum` | smallest gain margin, dB | at least 10 | common practice, no published source |
/// | `crossover_rhp_zero_ratio` | largest crossover over the corner's RHP zero (CCM corners) | at most 0.3 | common practice, no published source |
/// | `crossover_switching_ratio` | largest crossover over the switching frequency | at most 0.1 | common practice, no published source |
/// | `crossover_count_minimum` | fewest gain crossovers of any case | at least 1 | a loop must cross once |
/// | `crossover_count_maximum` | most gain crossovers of any case | at most 1 | conditional stability is reported |
/// | `output_setpoint_error` | divider error |(V − V_target)/V_target| | at most 0.01 | common practice, no published source |
/// | `overvoltage_trip_margin` | lowest Zener trip over the highest regulated output (if a Zener is fitted) | at least 1.1 | common practice, no published source |
pub fn regulation_rule_book(rule_limits: &[(String, Quantity)]) -> Result<RuleBook> {
    let n = Quantity::number;
    let mut b = RuleBook::new();
    let cp = "common practice, no published source";
    b.add(Rule::new(
        "phase_margin_minimum",
        "smallest phase margin (degrees) over every corner and CTR extreme",
        "common practice, no published source (Basso 2012 advises 45–70°)",
        Comparison::AtLeast,
        n(45.0),
        0.1,
    )?);
    b.add(Rule::new(
        "gain_margin_minimum",
        "smallest gain margin (dB) over every corner and CTR extreme",
        cp,
        Comparison::AtLeast,
        n(10.0),
        0.1,
    )?);
    b.add(Rule::new(
        "crossover_rhp_zero_ratio",
        "largest crossover over the RHP zero of its CCM corner",
        cp,
        Comparison::AtMost,
        n(0.3),
        0.1,
    )?);
    b.add(Rule::new(
        "crossover_switching_ratio",
        "largest crossover over the switching frequency",
        cp,
        Comparison::AtMost,
        n(0.1),
        0.1,
    )?);
    b.add(Rule::new(
        "crossover_count_minimum",
        "the loop gain crosses 0 dB at every corner and CTR extreme",
        "definition of a crossover",
        Comparison::AtLeast,
        n(1.0),
        0.0,
    )?);
    b.add(Rule::new(
        "crossover_count_maximum",
        "the loop gain crosses 0 dB once (more crossings: conditionally stable)",
        cp,
        Comparison::AtMost,
        n(1.0),
        0.0,
    )?);
    b.add(Rule::new(
        "output_setpoint_error",
        "divider set-point error at nominal values, |V − V_target|/V_target",
        cp,
        Comparison::AtMost,
        n(0.01),
        0.1,
    )?);
    b.add(Rule::new(
        "overvoltage_trip_margin",
        "lowest bias-Zener trip over the highest regulated output (tolerances)",
        cp,
        Comparison::AtLeast,
        n(1.1),
        0.02,
    )?);
    for (id, limit) in rule_limits {
        b.set_limit(id, *limit)?;
    }
    Ok(b)
}

/// Regulates a flyback design: divider, bias, compensation, margins at every corner and both
/// CTR extremes, over-voltage trip and rules.
///
/// Method: (1) [`output_divider`] for the regulated output; (2) [`optocoupler_bias`] for the
/// LED resistor's range; (3) the plant at the four line/load corners
/// ([`loop_plant_from_flyback`]); (4) [`compensation_type2`] at the CCM corner with the lowest
/// RHP zero (else low line, full load) at `ctr_max`, for the crossover target (given, or the
/// default of [`RegulationSpec::crossover_frequency`]); (5) [`LoopMargins`] at every corner ×
/// {`ctr_min`, `ctr_max`}; while a case's phase margin is more than
/// [`ZERO_PLACEMENT_TOLERANCE_DEG`] short of the target, the zero is lowered to give that case
/// the missing lead (atan(f_c/f_z) grows by the shortfall) and (4)–(5) repeat, at most
/// [`MAX_ZERO_PLACEMENTS`] times; (6) the bias again with the LED resistor; (7) the
/// bias-winding Zener's trip ([`bias_zener_trip`]) if fitted; (8) rules of
/// [`regulation_rule_book`], each on the worst case, naming it.
/// Errors: from each step (an impossible bias names `ctr_min`/`ctr_max`; a crossover at or
/// above f_s/2 names `crossover_frequency`); a Zener on a design without a bias winding.
/// Reference: see each step.
pub fn flyback_regulation(
    design: &FlybackDesign,
    spec: &FlybackSpec,
    reg: &RegulationSpec,
) -> Result<Regulation> {
    let rules = regulation_rule_book(&reg.rule_limits)?;
    let points = reg.points;
    if !(super::margins::MIN_POINTS..=super::margins::MAX_POINTS).contains(&points) {
        return Err(Error::out_of_range(format!(
            "`points` must be {} … {}, got {points}",
            super::margins::MIN_POINTS,
            super::margins::MAX_POINTS
        )));
    }
    number_within("phase_margin", reg.phase_margin, 20.0, 85.0)?;
    let out = &spec.outputs[spec
        .regulated_output
        .min(spec.outputs.len().saturating_sub(1))];
    let divider = output_divider(&OutputDividerSpec {
        output_voltage: out.voltage,
        reference: reg.reference,
        divider_current: reg.divider_current,
        series: reg.resistor_series,
        resistor_tolerance: reg.resistor_tolerance,
        trim: reg.trim,
    })?;
    let bias_spec = BiasSpec {
        output_voltage: out.voltage,
        reference: reg.reference,
        optocoupler: reg.optocoupler,
        feedback: reg.feedback,
        series: reg.resistor_series,
        headroom: reg.bias_headroom,
        led_supply_voltage: reg.led_supply_voltage,
    };
    let bias0 = optocoupler_bias(&bias_spec, None)?;
    let plants: Vec<LoopPlant> = LOOP_CORNERS
        .iter()
        .map(|c| loop_plant_from_flyback(design, spec, c, reg.ramp_fraction))
        .collect::<Result<_>>()?;
    for p in &plants {
        p.check_current_loop()?;
    }
    let fs = design.switching_frequency.value;
    let design_plant = plants
        .iter()
        .filter_map(|p| p.rhp_zero_frequency().map(|f| (f.value, p)))
        .min_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(_, p)| p)
        .unwrap_or(&plants[0]);
    let fc = match reg.crossover_frequency {
        Some(f) => positive("crossover_frequency", f)?.value,
        None => {
            let cap = DEFAULT_CROSSOVER_SWITCHING_FRACTION * fs;
            design_plant
                .rhp_zero_frequency()
                .map(|f| (DEFAULT_CROSSOVER_RHP_FRACTION * f.value).min(cap))
                .unwrap_or(cap)
        }
    };
    let fb = bias0.feedback;
    let network = Type2Network {
        upper_resistor: match divider.trim {
            Some(t) if t.position == super::divider::TrimPosition::Upper => {
                si(divider.upper_resistor.value * t.resistor.value
                    / (divider.upper_resistor.value + t.resistor.value))
            }
            _ => divider.upper_resistor,
        },
        led_resistor: bias0.led_resistor,
        zero_capacitor: si(1e-9),
        zero_resistor: None,
        pole_capacitor: si(0.0),
        pin_resistance: fb.pin_resistance,
        optocoupler_pole: reg.optocoupler.pole_frequency,
        modulator_gain: Type2Network::modulator_gain_for(
            design.current_limit,
            fb.current_zero_duty,
            fb.current_full_duty,
        )?,
    };
    // Place the network at the design corner, analyse every case, and lower the zero until
    // the lowest crossover (ctr_min, light load) also has the target phase margin.
    let mut zero_limit: Option<f64> = None;
    let mut iteration = 0;
    let (compensation, cases) = loop {
        iteration += 1;
        let compensation = compensation_type2(
            design_plant,
            &network,
            &CompensationTarget {
                crossover_frequency: si(fc),
                phase_margin: reg.phase_margin,
                ctr: reg.optocoupler.ctr_max,
                capacitor_series: reg.capacitor_series,
                resistor_series: reg.resistor_series,
                fast_lane: reg.led_supply_voltage.is_none(),
                led_resistor_range: (bias0.led_resistor_min, bias0.led_resistor_max),
                zero_frequency_limit: zero_limit.map(si),
            },
        )?;
        let mut cases = Vec::new();
        for p in &plants {
            for (name, ctr) in [
                ("ctr_min", reg.optocoupler.ctr_min),
                ("ctr_max", reg.optocoupler.ctr_max),
            ] {
                cases.push(LoopCase {
                    corner: p.corner.clone(),
                    ctr_case: name,
                    ctr,
                    plant: p.clone(),
                    margins: margins_of(p, &compensation.network, ctr, points)?,
                });
            }
        }
        let fz = compensation.network.zero_frequency().value;
        let short = cases
            .iter()
            .filter_map(|c| Some((c.margins.crossover()?.value, c.margins.phase_margin()?)))
            .filter(|&(_, pm)| pm < reg.phase_margin - ZERO_PLACEMENT_TOLERANCE_DEG)
            .min_by(|a, b| a.1.total_cmp(&b.1));
        let next = short.and_then(|(f, pm)| {
            let lead = (reg.phase_margin - pm) + (f / fz).atan().to_degrees();
            (lead < 85.0).then(|| (f / lead.to_radians().tan()).min(0.9 * fz))
        });
        match next {
            Some(z) if iteration < MAX_ZERO_PLACEMENTS => zero_limit = Some(z),
            _ => break (compensation, cases),
        }
    };
    let bias = optocoupler_bias(&bias_spec, Some(compensation.network.led_resistor))?;
    let overvoltage = match reg.overvoltage {
        Some(z) => {
            let b = design.bias.as_ref().ok_or_else(|| {
                Error::invalid(
                    "an over-voltage Zener (`ovp_zener_voltage`) needs a bias winding in the \
                     flyback design (`bias_voltage`)",
                )
            })?;
            let bw = spec
                .bias
                .as_ref()
                .ok_or_else(|| Error::invalid("the spec has no bias winding"))?;
            Some(bias_zener_trip(&BiasZenerSpec {
                zener_voltage: z.zener_voltage,
                zener_tolerance: z.zener_tolerance,
                trip_threshold: z.trip_threshold,
                bias_turns_per_output_turn: b.turns_per_regulated_turn,
                output_rectifier_drop: out.rectifier_drop,
                bias_rectifier_drop: bw.rectifier_drop,
                bias_overshoot_max: z.bias_overshoot_max,
            })?)
        }
        None => None,
    };
    let checks = evaluate(&rules, &divider, &cases, overvoltage.as_ref(), fs)?;
    Ok(Regulation {
        divider,
        bias,
        design_corner: design_plant.corner.clone(),
        compensation,
        cases,
        overvoltage,
        rules,
        checks,
    })
}

fn label(c: &LoopCase) -> String {
    format!("{}, {}", c.corner, c.ctr_case)
}

fn evaluate(
    rules: &RuleBook,
    divider: &OutputDivider,
    cases: &[LoopCase],
    ovp: Option<&BiasZenerTrip>,
    fs: f64,
) -> Result<Vec<CheckResult>> {
    let n = Quantity::number;
    let mut out = Vec::new();
    let mut worst = |id: &str, values: Vec<(f64, String)>, lowest: bool| -> Result<()> {
        let pick = values.into_iter().reduce(|a, b| {
            if (lowest && b.0 < a.0) || (!lowest && b.0 > a.0) {
                b
            } else {
                a
            }
        });
        if let Some((v, who)) = pick {
            let mut c = rules.check(id, n(v))?;
            c.description = format!("{} (worst: {who})", c.description);
            out.push(c);
        }
        Ok(())
    };
    worst(
        "phase_margin_minimum",
        cases
            .iter()
            .filter_map(|c| c.margins.phase_margin().map(|p| (p, label(c))))
            .collect(),
        true,
    )?;
    worst(
        "gain_margin_minimum",
        cases
            .iter()
            .map(|c| (c.margins.gain_margin, label(c)))
            .collect(),
        true,
    )?;
    worst(
        "crossover_rhp_zero_ratio",
        cases
            .iter()
            .filter_map(|c| {
                let z = c.plant.rhp_zero_frequency()?;
                let last = c.margins.crossovers.last()?;
                Some((last.value / z.value, label(c)))
            })
            .collect(),
        false,
    )?;
    worst(
        "crossover_switching_ratio",
        cases
            .iter()
            .filter_map(|c| Some((c.margins.crossovers.last()?.value / fs, label(c))))
            .collect(),
        false,
    )?;
    worst(
        "crossover_count_minimum",
        cases
            .iter()
            .map(|c| (c.margins.crossovers.len() as f64, label(c)))
            .collect(),
        true,
    )?;
    worst(
        "crossover_count_maximum",
        cases
            .iter()
            .map(|c| (c.margins.crossovers.len() as f64, label(c)))
            .collect(),
        false,
    )?;
    out.push(rules.check("output_setpoint_error", n(divider.output_error.abs()))?);
    if let Some(t) = ovp {
        out.push(rules.check(
            "overvoltage_trip_margin",
            n(t.output_trip_voltage_min.value / divider.output_voltage_max.value),
        )?);
    }
    Ok(out)
}

impl Regulation {
    /// One row per corner and CTR extreme: crossover, phase and gain margin, RHP zero.
    pub fn margins_table(&self) -> Table {
        let mut t = Table::new();
        for c in &self.cases {
            let mut row = vec![
                Field::new("corner", c.corner.as_str()),
                Field::new("ctr_case", c.ctr_case),
                Field::new("ctr", c.ctr),
                Field::new("mode", c.plant.mode.as_str()),
            ];
            row.extend(c.margins.fields());
            match c.plant.rhp_zero_frequency() {
                Some(f) => row.push(Field::quantity("rhp_zero_frequency", f)),
                None => row.push(Field::new("rhp_zero_frequency", "none (dcm)")),
            }
            t.push_row(row);
        }
        t
    }
    /// The smallest phase margin over every case, degrees (None if no case crosses over).
    pub fn worst_phase_margin(&self) -> Option<f64> {
        self.cases
            .iter()
            .filter_map(|c| c.margins.phase_margin())
            .reduce(f64::min)
    }
    /// The case with the smallest phase margin (or the first case).
    pub fn worst_case(&self) -> &LoopCase {
        self.cases
            .iter()
            .filter(|c| c.margins.phase_margin().is_some())
            .min_by(|a, b| {
                a.margins
                    .phase_margin()
                    .unwrap_or(f64::INFINITY)
                    .total_cmp(&b.margins.phase_margin().unwrap_or(f64::INFINITY))
            })
            .unwrap_or(&self.cases[0])
    }
    /// The case of a corner and CTR extreme (`ctr_min`, `ctr_max`); errors list the names.
    pub fn case(&self, corner: &str, ctr_case: &str) -> Result<&LoopCase> {
        self.cases
            .iter()
            .find(|c| c.corner == corner && c.ctr_case == ctr_case)
            .ok_or_else(|| {
                Error::unknown(format!(
                    "no loop case `{corner}`, `{ctr_case}`; corners: {}; CTR cases: ctr_min, ctr_max",
                    LOOP_CORNERS.join(", ")
                ))
            })
    }
    /// The worst rule status.
    pub fn worst_status(&self) -> Status {
        worst_status(&self.checks)
    }
}

impl Record for Regulation {
    fn fields(&self) -> Vec<Field> {
        let d = &self.divider;
        let c = &self.compensation.network;
        let mut v = vec![
            Field::quantity("upper_resistor", d.upper_resistor),
            Field::quantity("lower_resistor", d.lower_resistor),
        ];
        match d.trim {
            Some(t) => {
                v.push(Field::new("trim_position", t.position.as_str()));
                v.push(Field::quantity("trim_resistor", t.resistor));
            }
            None => v.push(Field::new("trim_position", "none")),
        }
        v.extend([
            Field::quantity("output_voltage", d.output_voltage),
            Field::quantity("output_voltage_min", d.output_voltage_min),
            Field::quantity("output_voltage_max", d.output_voltage_max),
            Field::quantity("led_resistor", c.led_resistor),
            Field::quantity("bias_resistor", self.bias.bias_resistor),
            Field::new("fast_lane", c.zero_resistor.is_none()),
        ]);
        if let Some(r) = c.zero_resistor {
            v.push(Field::quantity("zero_resistor", r));
        }
        v.extend([
            Field::quantity("zero_capacitor", c.zero_capacitor),
            Field::quantity("pole_capacitor", c.pole_capacitor),
            Field::quantity("zero_frequency", c.zero_frequency()),
            Field::quantity("pole_frequency", c.pole_frequency()),
            Field::new("design_corner", self.design_corner.as_str()),
            Field::quantity("target_crossover", self.compensation.target_crossover),
        ]);
        let cross: Vec<f64> = self
            .cases
            .iter()
            .filter_map(|c| c.margins.crossover().map(|f| f.value))
            .collect();
        if !cross.is_empty() {
            let lo = cross.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = cross.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            v.push(Field::quantity("crossover_min", si::<Frequency>(lo)));
            v.push(Field::quantity("crossover_max", si::<Frequency>(hi)));
        }
        match self.worst_phase_margin() {
            Some(p) => {
                let w = self.worst_case();
                v.push(Field::new("phase_margin_worst_degrees", p));
                v.push(Field::new("phase_margin_worst_case", label(w)));
            }
            None => v.push(Field::new("phase_margin_worst_degrees", "none")),
        }
        let gm = self
            .cases
            .iter()
            .map(|c| c.margins.gain_margin)
            .fold(f64::INFINITY, f64::min);
        v.push(Field::new("gain_margin_worst_db", gm));
        if let Some(t) = &self.overvoltage {
            v.push(Field::quantity(
                "overvoltage_trip_voltage_min",
                t.output_trip_voltage_min,
            ));
            v.push(Field::quantity(
                "overvoltage_trip_voltage_max",
                t.output_trip_voltage_max,
            ));
        }
        v.push(Field::new("worst_status", self.worst_status().to_string()));
        v.push(Field::new(
            "overridden_limits",
            crate::rules::overridden_limits(&self.checks),
        ));
        v
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::flyback::{flyback_design, OutputWinding};

    #[test]
    fn the_universal_12_volt_design_regulates() {
        let spec = FlybackSpec::universal(OutputWinding::new(si(12.0), si(1.25)));
        let d = flyback_design(&spec).unwrap();
        let r = flyback_regulation(&d, &spec, &RegulationSpec::default()).unwrap();
        assert_eq!(r.cases.len(), 8);
        // the design corner is the CCM corner (low line, full load) and the lowest crossover
        // (ctr_min, light load) got the zero it needs
        assert_eq!(r.design_corner, "low_line_full_load");
        let pm = r.worst_phase_margin().unwrap();
        assert!(pm >= 60.0 - ZERO_PLACEMENT_TOLERANCE_DEG, "{pm}");
    }
}

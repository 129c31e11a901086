//! The whole supply from one specification: power stage, transformer (its computed loss and
//! leakage fed back into the power stage until the two agree), regulation and loop, EMI input
//! filter and the primary–secondary barrier, with every check of every part in one list.

use super::spec::{
    EmiFilterSection, IsolationSection, PowerStageSection, RegulationSection, SupplySpec,
    TransformerSection,
};
use crate::emi::{
    emi_source_from_flyback, input_filter_checks, input_filter_design, EmissionClass,
    FlybackEmiSource, InputFilterDesign, InputFilterSpec,
};
use crate::error::{Error, Result};
use crate::feedback::{flyback_regulation, Regulation, RegulationSpec};
use crate::flyback::{
    flyback_design, BiasWinding, BulkChoice, ClampKind, EfficiencyModel, FlybackDesign,
    FlybackSpec, InputRange, Leakage, ModeTarget, OutputWinding,
};
use crate::magnetics::{
    core_by_size, ferrite_material, transformer_check, transformer_checks, transformer_design,
    transformer_operating_point, GapPlacement, GivenMagnetising, GivenTransformer,
    TransformerDesign, TransformerSpec, WindingOrder, WireSystem,
};
use crate::report::{Field, Record};
use crate::rules::{CheckResult, Status};
use crate::safety::{
    barrier_checks, barrier_requirements, largest_y_capacitance, Barrier, BarrierRequirement,
    BarrierSpec, BarrierVoltageEstimates, FieldCase, InsulationGrade, MaterialGroup,
    OvervoltageCategory, PollutionDegree, ProvidedInsulation, WorkingVoltageMethod,
};
use crate::units::{si, Power, Quantity};

/// Largest number of power-stage/transformer passes before the consistency loop gives up.
pub const MAX_CONSISTENCY_ITERATIONS: usize = 12;
/// Tolerance of the transformer loss: the loss the power stage charges to the transformer at
/// the transformer's operating corner and the transformer's computed copper + core loss agree
/// within this fraction of the full-load output power (bias included; 0.1 %, i.e. 15 mW at
/// 15 W; common practice, no published source).
pub const LOSS_TOLERANCE: f64 = 1e-3;
/// Tolerance of the leakage inductance: the value the power stage (clamp) uses and the
/// transformer's computed leakage agree within this relative difference (1 %).
pub const LEAKAGE_TOLERANCE: f64 = 0.01;

/// One pass of the consistency loop.
#[derive(Clone, Debug, PartialEq)]
pub struct ConsistencyStep {
    /// Pass number, from 1.
    pub iteration: usize,
    /// Transformer loss fraction the power stage used in this pass (of the corner's load power).
    pub loss_fraction_used: f64,
    /// The transformer's computed loss over the load power at its operating corner.
    pub loss_fraction_computed: f64,
    /// Leakage the power stage used (H).
    pub leakage_used: crate::units::Inductance,
    /// Leakage the transformer computed (H).
    pub leakage_computed: crate::units::Inductance,
    /// Primary inductance of the pass.
    pub primary_inductance: crate::units::Inductance,
    /// Efficiency at low line, full load.
    pub efficiency: f64,
}

/// One check of one part, with the corner where it is worst.
#[derive(Clone, Debug, PartialEq)]
pub struct SupplyCheck {
    /// The part: `power_stage`, `transformer`, `regulation`, `emi_filter`, `isolation`.
    pub part: &'static str,
    /// The corner (or case) where the rule is worst, where the part evaluates corners; None
    /// for a rule with a single evaluation.
    pub worst_corner: Option<String>,
    /// The result.
    pub check: CheckResult,
}

/// The whole supply.
#[derive(Clone, Debug)]
pub struct SupplyDesign {
    /// The specification as given (defaults filled in).
    pub spec: SupplySpec,
    /// The power stage spec after the consistency loop (transformer loss and leakage set).
    pub flyback_spec: FlybackSpec,
    /// Power stage.
    pub power_stage: FlybackDesign,
    /// Transformer spec (operating point from the power stage).
    pub transformer_spec: TransformerSpec,
    /// Transformer.
    pub transformer: TransformerDesign,
    /// Corner the transformer's operating point comes from.
    pub transformer_corner: &'static str,
    /// The turns kept by the consistency loop, when it had to keep them (see
    /// [`ConsistentStage::given_turns`]).
    pub given_turns: Option<GivenTransformer>,
    /// The consistency loop, pass by pass.
    pub consistency: Vec<ConsistencyStep>,
    /// Regulation and loop.
    pub regulation: Regulation,
    /// The converter corner the EMI filter was designed at (the one needing more DM inductance).
    pub emi_corner: String,
    /// EMI input filter.
    pub emi_filter: InputFilterDesign,
    /// The primary–secondary working voltage estimates.
    pub barrier_voltage: BarrierVoltageEstimates,
    /// Primary–secondary barrier requirement.
    pub barrier: BarrierRequirement,
    /// What the layout provides.
    pub provided: ProvidedInsulation,
    /// Every check of every part.
    pub checks: Vec<SupplyCheck>,
}

impl SupplyDesign {
    /// The worst verdict over every check.
    pub fn worst_status(&self) -> Status {
        self.checks
            .iter()
            .map(|c| c.check.status)
            .max()
            .unwrap_or(Status::Pass)
    }
    /// Number of failed checks.
    pub fn failed_checks(&self) -> usize {
        self.checks
            .iter()
            .filter(|c| c.check.status == Status::Fail)
            .count()
    }
}

fn flyback_spec_of(p: &PowerStageSection) -> Result<FlybackSpec> {
    let mut o = OutputWinding::new(p.output_voltage, p.output_current);
    o.rectifier_drop = p.rectifier_drop;
    o.rectifier_voltage_rating = p.rectifier_voltage_rating;
    o.capacitance = p.output_capacitance;
    o.esr = p.output_esr;
    o.ripple_current_rating = p.output_ripple_current_rating;
    o.post_filter_inductance = p.post_filter_inductance;
    o.post_filter_capacitance = p.post_filter_capacitance;
    let mut s = FlybackSpec::universal(o);
    s.input = InputRange::Ac {
        min_rms: p.min_line_voltage,
        max_rms: p.max_line_voltage,
        line_frequency: p.line_frequency,
    };
    s.bulk = match (p.bulk_capacitance, p.target_valley_voltage) {
        (Some(_), Some(_)) => {
            return Err(Error::invalid(
                "supply_design: give `power_stage.bulk_capacitance` (F) or `power_stage.target_valley_voltage` (V), not both",
            ))
        }
        (Some(c), None) => BulkChoice::Capacitance(c),
        (None, Some(v)) => BulkChoice::TargetValley(v),
        (None, None) => BulkChoice::DerivedValley,
    };
    s.losses.bulk_esr = p.bulk_esr;
    s.bulk_ripple_current_rating = p.bulk_ripple_current_rating;
    s.bias = p.bias_voltage.map(|v| BiasWinding {
        voltage: v,
        current: p.bias_current,
        rectifier_drop: p.bias_rectifier_drop,
    });
    s.switching_frequency = p.switching_frequency;
    s.current_limit = p.current_limit;
    s.current_limit_tolerance = p.current_limit_tolerance;
    s.max_duty_cycle = p.max_duty_cycle;
    s.mode = Some(match p.mode.as_str() {
        "ccm" => ModeTarget::Continuous {
            ripple_ratio: p.ripple_ratio,
        },
        "dcm" => ModeTarget::Discontinuous {
            margin: p.dcm_margin,
        },
        "boundary" => ModeTarget::Boundary,
        other => {
            return Err(Error::unknown(format!(
                "supply_design: `power_stage.mode` must be \"ccm\", \"dcm\" or \"boundary\", got \"{other}\""
            )))
        }
    });
    s.reflected_voltage = p.reflected_voltage;
    s.switch_voltage_rating = p.switch_voltage_rating;
    s.losses.switch_on_resistance = p.switch_on_resistance;
    s.clamp = match p.clamp.as_str() {
        "rcd" => ClampKind::Rcd,
        "zener" => ClampKind::Zener,
        other => {
            return Err(Error::unknown(format!(
                "supply_design: `power_stage.clamp` must be \"rcd\" or \"zener\", got \"{other}\""
            )))
        }
    };
    s.clamp_voltage_above_reflected = p.clamp_voltage_above_reflected;
    s.leakage = Leakage::Fraction(p.leakage_fraction);
    s.efficiency = EfficiencyModel::Computed {
        start: p.efficiency,
    };
    s.losses.transformer_loss_fraction = p.transformer_loss_fraction;
    s.ambient_temperature = p.ambient_temperature;
    s.rule_limits = p.rule_limits.clone().map(|r| r.0).unwrap_or_default();
    s.validate()
        .map_err(|e| e.context("supply_design: power_stage"))?;
    Ok(s)
}

fn transformer_spec_of(t: &TransformerSection) -> Result<TransformerSpec> {
    if !(1..=3).contains(&t.enamel_grade) {
        return Err(Error::out_of_range(format!(
            "supply_design: `transformer.enamel_grade` = {} is outside 1 … 3",
            t.enamel_grade
        )));
    }
    let z = si(0.0);
    Ok(TransformerSpec {
        core: core_by_size(&t.core)?,
        material: ferrite_material(&t.material)?,
        primary_inductance: si(1e-3),
        inductance_tolerance: t.inductance_tolerance,
        switching_frequency: si(65e3),
        primary_peak_current: si(1.0),
        primary_valley_current: z,
        duty_cycle: 0.5,
        secondary_conduction_fraction: 0.5,
        current_limit: si(1.0),
        current_limit_tolerance: 0.1,
        current_limit_overshoot: z,
        short_circuit_peak_current: None,
        reflected_voltage: si(100.0),
        output_voltage: si(12.0),
        rectifier_drop: si(0.5),
        output_current: None,
        additional_outputs: Vec::new(),
        bias: None,
        max_flux_density: t.max_flux_density,
        saturation_margin: t.saturation_margin,
        core_temperature: t.core_temperature,
        winding_temperature: t.winding_temperature,
        ambient_temperature: t.ambient_temperature,
        gap_placement: GapPlacement::parse(&t.gap_placement)?,
        wire_system: WireSystem::parse(&t.wire_system)?,
        enamel_grade: t.enamel_grade as u8,
        secondary_triple_insulated: t.secondary_triple_insulated,
        primary_litz: t.primary_litz,
        secondary_litz: t.secondary_litz,
        litz_strand_diameter: t.litz_strand_diameter,
        max_strand_diameter: None,
        max_current_density: t.max_current_density,
        max_window_fill: t.max_window_fill,
        max_temperature_rise: t.max_temperature_rise,
        max_layers: t.max_layers,
        insulation_layers: t.insulation_layers,
        functional_tape_layers: t.functional_tape_layers,
        tape_thickness: t.tape_thickness,
        margin_width: t.margin_width,
        required_creepage: t.required_creepage,
        thermal_resistance: None,
        winding_order: WindingOrder::parse(&t.winding_order)?,
        insulation_class: t.insulation_class.clone(),
    })
}

fn regulation_spec_of(r: &RegulationSection) -> RegulationSpec {
    let mut s = RegulationSpec::default();
    s.optocoupler.ctr_min = r.ctr_min;
    s.optocoupler.ctr_max = r.ctr_max;
    s.divider_current = r.divider_current;
    s.resistor_tolerance = r.resistor_tolerance;
    s.crossover_frequency = r.crossover_frequency;
    s.phase_margin = r.phase_margin;
    s.ramp_fraction = r.ramp_fraction;
    s.rule_limits = r.rule_limits.clone().map(|l| l.0).unwrap_or_default();
    s
}

fn filter_spec_of(
    e: &EmiFilterSection,
    p: &PowerStageSection,
    src: &FlybackEmiSource,
) -> Result<InputFilterSpec> {
    let max_y = match e.max_y_capacitance {
        Some(c) => c,
        None => {
            largest_y_capacitance(e.touch_current_limit, p.max_line_voltage, e.line_frequency)?
                .capacitance
        }
    };
    let mut s = InputFilterSpec {
        switching_frequency: src.switching_frequency,
        primary_current: src.primary_current,
        drain_voltage: src.drain_voltage,
        bulk_capacitance: src.bulk_capacitance,
        bulk_esr: p.bulk_esr,
        bulk_esl: e.bulk_esl,
        parasitic_capacitance: e.parasitic_capacitance,
        class: EmissionClass::parse(&e.class)?,
        margin: e.margin,
        stages: e.stages,
        x_capacitance: e.x_capacitance,
        inductor_resistance: e.inductor_resistance,
        max_y_capacitance: max_y,
        minimum_input_voltage: src.minimum_input_voltage,
        input_power: src.input_power,
        middlebrook_margin: e.middlebrook_margin,
        maximum_line_voltage: src.maximum_line_voltage,
        line_frequency: e.line_frequency,
        discharge_time: e.discharge_time,
        discharge_voltage: e.discharge_voltage,
    };
    src.apply_to(&mut s);
    Ok(s)
}

fn barrier_spec_of(i: &IsolationSection, w: &BarrierVoltageEstimates) -> Result<BarrierSpec> {
    let used = w.used();
    Ok(BarrierSpec {
        barrier: Barrier::parse("primary_secondary")?,
        grade: InsulationGrade::parse(&i.insulation)?,
        mains_voltage: i.mains_voltage,
        overvoltage_category: OvervoltageCategory::parse(&i.overvoltage_category)?,
        pollution_degree: PollutionDegree::from_number(i64::from(i.pollution_degree))?,
        material_group: MaterialGroup::parse(&i.material_group)?,
        altitude: i.altitude,
        field: FieldCase::parse(&i.field)?,
        working_voltage_peak: used.working_voltage_peak,
        working_voltage_rms: used.working_voltage_rms,
        working_frequency: used.working_frequency,
        impulse_voltage: None,
    })
}

/// The corner where a power-stage rule is worst, from the design's corners.
fn flyback_worst_corner(d: &FlybackDesign, id: &str) -> Option<String> {
    let line_load = |c: &&crate::flyback::OperatingPoint| !c.corner.contains("limit");
    let max_by = |f: &dyn Fn(&crate::flyback::OperatingPoint) -> f64, all: bool| {
        d.corners
            .iter()
            .filter(|c| all || line_load(c))
            .max_by(|a, b| f(a).total_cmp(&f(b)))
            .map(|c| c.corner.clone())
    };
    match id {
        "duty_cycle_limit" => max_by(&|c| c.duty_cycle, false),
        "drain_voltage_derating" => max_by(&|c| c.drain_voltage_peak.value, true),
        "bulk_valley_minimum" => d
            .corners
            .iter()
            .filter(line_load)
            .min_by(|a, b| {
                a.bulk_valley_voltage
                    .value
                    .total_cmp(&b.bulk_valley_voltage.value)
            })
            .map(|c| c.corner.clone()),
        "switch_junction_temperature" => d
            .junctions
            .iter()
            .find(|j| j.part == "switch")
            .map(|j| j.corner.clone()),
        "rectifier_junction_temperature" => d
            .junctions
            .iter()
            .filter(|j| j.part.starts_with("rectifier"))
            .max_by(|a, b| {
                a.junction_temperature
                    .value
                    .total_cmp(&b.junction_temperature.value)
            })
            .map(|j| j.corner.clone()),
        "mode_target" | "current_limit_headroom" => Some("low_line_full_load".into()),
        _ => None,
    }
}

/// Splits the regulation rules' "(worst: corner, ctr)" into the corner.
fn regulation_check(mut c: CheckResult) -> SupplyCheck {
    let mut corner = None;
    if let Some(at) = c.description.find(" (worst: ") {
        let rest = &c.description[at + 9..];
        corner = Some(rest.trim_end_matches(')').to_string());
        c.description.truncate(at);
    }
    SupplyCheck {
        part: "regulation",
        worst_corner: corner,
        check: c,
    }
}

/// The power stage and its transformer after [`consistent_power_stage`].
#[derive(Clone, Debug)]
pub struct ConsistentStage {
    /// The power stage spec with the transformer's loss fraction and leakage.
    pub flyback_spec: FlybackSpec,
    /// The power stage.
    pub power_stage: FlybackDesign,
    /// The transformer spec at the power stage's operating point.
    pub transformer_spec: TransformerSpec,
    /// The transformer.
    pub transformer: TransformerDesign,
    /// The corner of the transformer's operating point.
    pub transformer_corner: &'static str,
    /// The turns the loop kept once they repeated (None: the free design converged before):
    /// `transformer_check(&transformer_spec, &given_turns)` reproduces `transformer`.
    pub given_turns: Option<GivenTransformer>,
    /// The loop, pass by pass.
    pub steps: Vec<ConsistencyStep>,
}

/// The power stage and the transformer made consistent: the power stage is designed with a
/// transformer loss fraction and a leakage, the transformer is designed at the power stage's
/// operating point, and its computed copper + core loss (as a fraction of the full-load output
/// power) and leakage inductance replace the power stage's until both agree within
/// [`LOSS_TOLERANCE`] and [`LEAKAGE_TOLERANCE`].
///
/// The loss enters the power stage's efficiency model (so the inductance, currents and bulk
/// capacitor follow), the leakage enters the clamp (its energy ½·L_lk·I²·f). Fixed-point
/// iteration, at most [`MAX_CONSISTENCY_ITERATIONS`] passes; not converging is an error
/// naming the last residuals (integer turns can make the transformer hop between two builds).
/// Assumption: the transformer loss scales with the load power at the other corners (the
/// power stage's model), and it is evaluated at the transformer's operating corner (the
/// highest primary peak below the limit, in practice low line, full load).
pub fn consistent_power_stage(fs: FlybackSpec, ts: TransformerSpec) -> Result<ConsistentStage> {
    consistent_within(fs, ts, MAX_CONSISTENCY_ITERATIONS)
}

/// [`consistent_power_stage`] with at most `passes` passes.
fn consistent_within(
    mut fs: FlybackSpec,
    mut ts: TransformerSpec,
    passes: usize,
) -> Result<ConsistentStage> {
    let mut steps = Vec::new();
    let mut seen_turns: Vec<(u32, u32, u32)> = Vec::new();
    let mut frozen: Option<GivenTransformer> = None;
    for iteration in 1..=passes {
        let d = flyback_design(&fs).map_err(|e| e.context("supply_design: power stage"))?;
        let op = transformer_operating_point(&fs, &d)?;
        op.apply_to(&mut ts);
        let t = match &frozen {
            None => transformer_design(&ts),
            Some(g) => {
                let mut g: GivenTransformer = g.clone();
                g.magnetising = GivenMagnetising::MeasuredInductance(d.primary_inductance);
                transformer_check(&ts, &g).map(|c| c.design)
            }
        }
        .map_err(|e| e.context("supply_design: transformer"))?;
        let turns = (t.primary_turns, t.secondary_turns, t.bias_turns);
        if frozen.is_none() && seen_turns.contains(&turns) {
            // the turns came back (a fixed point or a hop between builds): keep them, and let
            // only the continuous values (gap, losses, leakage) settle from here on
            frozen = Some(GivenTransformer {
                primary_turns: t.primary_turns,
                primary_first_half_turns: None,
                secondary_turns: t.secondary_turns,
                additional_output_turns: t.additional_outputs.iter().map(|a| a.turns).collect(),
                bias_turns: (t.bias_turns > 0).then_some(t.bias_turns),
                magnetising: GivenMagnetising::MeasuredInductance(d.primary_inductance),
            });
        }
        seen_turns.push(turns);
        let p_out: Power = fs.output_power();
        let at = d
            .corners
            .iter()
            .find(|c| c.corner == op.corner)
            .ok_or_else(|| {
                Error::invalid(format!(
                    "supply_design: the transformer's corner `{}` is not a corner of the power stage",
                    op.corner
                ))
            })?;
        // the power stage charges fraction × (load power of the corner) to the transformer
        let used_w = at.losses.transformer.value;
        let computed = t.total_loss.value / at.output_power.value;
        let used = fs.losses.transformer_loss_fraction;
        let leak_used = d.leakage_inductance;
        let leak = t.leakage_inductance;
        steps.push(ConsistencyStep {
            iteration,
            loss_fraction_used: used,
            loss_fraction_computed: computed,
            leakage_used: leak_used,
            leakage_computed: leak,
            primary_inductance: d.primary_inductance,
            efficiency: d.efficiency,
        });
        let leak_ok =
            (leak.value - leak_used.value).abs() <= LEAKAGE_TOLERANCE * leak.value.abs().max(1e-12);
        if (used_w - t.total_loss.value).abs() <= LOSS_TOLERANCE * p_out.value && leak_ok {
            let l_final = d.primary_inductance;
            return Ok(ConsistentStage {
                flyback_spec: fs,
                power_stage: d,
                transformer_spec: ts,
                transformer: t,
                transformer_corner: op.corner,
                given_turns: frozen.map(|mut g| {
                    g.magnetising = GivenMagnetising::MeasuredInductance(l_final);
                    g
                }),
                steps,
            });
        }
        if !(0.0..=0.3).contains(&computed) {
            return Err(Error::infeasible(format!(
                "supply_design: the transformer's computed loss is {} of the output power, outside 0 … 30 %; choose a larger core or lower current density",
                Quantity::number(computed)
            )));
        }
        fs.losses.transformer_loss_fraction = computed;
        fs.leakage = Leakage::Value(leak);
    }
    let last = steps.last();
    Err(Error::infeasible(format!(
        "supply_design: power stage and transformer did not agree within {passes} pass{} (loss fraction used {:.5} vs computed {:.5}, leakage used {} vs computed {}); tolerances {LOSS_TOLERANCE} of output power and {LEAKAGE_TOLERANCE} relative",
        if passes == 1 { "" } else { "es" },
        last.map_or(0.0, |s| s.loss_fraction_used),
        last.map_or(0.0, |s| s.loss_fraction_computed),
        last.map_or(Quantity::number(0.0), |s| Quantity::from_typed(s.leakage_used)),
        last.map_or(Quantity::number(0.0), |s| Quantity::from_typed(s.leakage_computed)),
    )))
}

/// Designs the whole supply from one specification.
///
/// Steps: (1) the power stage ([`flyback_design`]) and the transformer
/// ([`transformer_design`], operating point from [`transformer_operating_point`]) made
/// consistent by [`consistent_power_stage`]; (2) regulation and loop at every corner and both
/// CTR extremes ([`flyback_regulation`]); (3) the EMI input filter ([`input_filter_design`])
/// designed at low line and at high line, full load (sources from [`emi_source_from_flyback`]),
/// keeping the corner that needs more differential-mode inductance, with the Y capacitance
/// from the touch-current limit ([`largest_y_capacitance`]) unless given; (4) the
/// primary–secondary barrier ([`barrier_requirements`]) from the power stage's working voltage
/// ([`BarrierVoltageEstimates`]) and its checks against the layout ([`barrier_checks`]).
/// Every check of every part is collected with the corner where it is worst (power stage:
/// from its corners and junctions; regulation: the corner and CTR case its rule names).
/// Each part stays callable on its own with the same inputs. Valid where each part is valid;
/// the first part that cannot be designed stops with its error, prefixed by the part.
/// References: those of each part (Erickson & Maksimović 3rd ed. 2020 ch. 5–6; McLyman 2011;
/// CISPR 32; IEC 60664-1:2020 and IEC 62368-1:2018).
pub fn supply_design(spec: &SupplySpec) -> Result<SupplyDesign> {
    let fs0 = flyback_spec_of(&spec.power_stage)?;
    let ts0 = transformer_spec_of(&spec.transformer)?;
    let ConsistentStage {
        flyback_spec: fs,
        power_stage: d,
        transformer_spec: ts,
        transformer: t,
        transformer_corner: t_corner,
        given_turns,
        steps: consistency,
    } = consistent_power_stage(fs0, ts0)?;

    let reg = flyback_regulation(&d, &fs, &regulation_spec_of(&spec.regulation))
        .map_err(|e| e.context("supply_design: regulation"))?;

    let rise = spec.emi_filter.rise_time;
    let mut best: Option<(String, InputFilterDesign)> = None;
    for corner in ["low_line_full_load", "high_line_full_load"] {
        let src = emi_source_from_flyback(&d, corner, rise)?;
        let f = input_filter_design(&filter_spec_of(&spec.emi_filter, &spec.power_stage, &src)?)
            .map_err(|e| e.context("supply_design: emi_filter"))?;
        let dm = |f: &InputFilterDesign| {
            f.differential_stages
                .iter()
                .map(|s| s.inductance.value)
                .sum::<f64>()
        };
        if best.as_ref().is_none_or(|(_, b)| dm(&f) > dm(b)) {
            best = Some((corner.to_string(), f));
        }
    }
    let (emi_corner, emi) =
        best.ok_or_else(|| Error::invalid("supply_design: no EMI corner was evaluated"))?;

    let method = WorkingVoltageMethod::parse(&spec.isolation.working_voltage_method)?;
    let w = BarrierVoltageEstimates::of(&d, method)?;
    let barrier = barrier_requirements(&barrier_spec_of(&spec.isolation, &w)?)
        .map_err(|e| e.context("supply_design: isolation"))?;
    let i = &spec.isolation;
    let provided = ProvidedInsulation {
        clearance: i.provided_clearance,
        creepage: i.provided_creepage,
        creepage_printed_board: i.provided_creepage_printed_board,
        distance_through_insulation: i.provided_distance_through_insulation,
        thin_sheet_layers: i.provided_thin_sheet_layers.map(i64::from),
        thin_sheet_each_layer_tested: i.provided_thin_sheet_each_layer_tested,
    };

    let mut checks = Vec::new();
    for c in &d.checks {
        checks.push(SupplyCheck {
            part: "power_stage",
            worst_corner: flyback_worst_corner(&d, &c.id),
            check: c.clone(),
        });
    }
    for c in transformer_checks(&ts, &t)? {
        // the flux rules are evaluated at the current limit (highest limit, upper inductance
        // tolerance) or with the output shorted, the rest at the operating corner
        let corner = match c.id.as_str() {
            "flux_at_current_limit" | "saturation_margin_hot" => "current_limit_worst_case",
            "saturation_in_short_circuit" => "output_shorted",
            _ => t_corner,
        };
        checks.push(SupplyCheck {
            part: "transformer",
            worst_corner: Some(corner.to_string()),
            check: c,
        });
    }
    checks.extend(reg.checks.iter().cloned().map(regulation_check));
    for c in input_filter_checks(&emi)? {
        // the touch current is taken at the highest line voltage and frequency
        let corner = if c.id == "y_capacitor_touch_current" {
            "highest_line".to_string()
        } else {
            emi_corner.clone()
        };
        checks.push(SupplyCheck {
            part: "emi_filter",
            worst_corner: Some(corner),
            check: c,
        });
    }
    for c in barrier_checks(&barrier, &provided)? {
        checks.push(SupplyCheck {
            part: "isolation",
            worst_corner: Some("high_line_full_load".into()),
            check: c,
        });
    }

    Ok(SupplyDesign {
        spec: spec.clone(),
        flyback_spec: fs,
        power_stage: d,
        transformer_spec: ts,
        transformer: t,
        transformer_corner: t_corner,
        given_turns,
        consistency,
        regulation: reg,
        emi_corner,
        emi_filter: emi,
        barrier_voltage: w,
        barrier,
        provided,
        checks,
    })
}

/// The supply's summary: one row in a family table.
#[derive(Clone, Debug, PartialEq)]
pub struct SupplySummary(pub Vec<Field>);

impl Record for SupplySummary {
    fn fields(&self) -> Vec<Field> {
        self.0.clone()
    }
}

impl SupplyDesign {
    /// The key values of every part, in review order.
    pub fn summary(&self) -> SupplySummary {
        let d = &self.power_stage;
        let t = &self.transformer;
        let e = &self.emi_filter;
        let mut f = vec![
            Field::new("name", self.spec.name.clone()),
            Field::quantity("output_power", d.output_power),
            Field::new("efficiency", d.efficiency),
            Field::quantity("primary_inductance", d.primary_inductance),
            Field::quantity("leakage_inductance", d.leakage_inductance),
            Field::quantity("current_limit", d.current_limit),
            Field::quantity("drain_voltage_peak", max_drain(d)),
            Field::new("core", t.core_name.clone()),
            Field::new("primary_turns", f64::from(t.primary_turns)),
            Field::new("secondary_turns", f64::from(t.secondary_turns)),
            Field::quantity("transformer_loss", t.total_loss),
            Field::quantity("flux_density_limit_peak", t.flux_density_limit_peak),
            Field::new("consistency_iterations", self.consistency.len() as f64),
        ];
        if let Some(pm) = self
            .regulation
            .cases
            .iter()
            .filter_map(|c| c.margins.phase_margin())
            .reduce(f64::min)
        {
            f.push(Field::new("phase_margin_min", pm));
        }
        f.push(Field::new(
            "emi_worst_margin_filtered_db",
            e.worst_margin_filtered.value,
        ));
        f.push(Field::quantity("barrier_clearance", self.barrier.clearance));
        f.push(Field::quantity("barrier_creepage", self.barrier.creepage));
        f.push(Field::new("worst_status", self.worst_status().to_string()));
        f.push(Field::new("failed_checks", self.failed_checks() as f64));
        SupplySummary(f)
    }
}

fn max_drain(d: &FlybackDesign) -> crate::units::ElectricPotential {
    d.corners
        .iter()
        .map(|c| c.drain_voltage_peak)
        .fold(si(0.0), |a, b| if b > a { b } else { a })
}

impl SupplyDesign {
    /// Every check as a table row: part, worst corner, then the check's own fields.
    pub fn check_table(&self) -> crate::report::Table {
        let mut t = crate::report::Table::new();
        for c in &self.checks {
            let mut f = vec![
                Field::new("part", c.part),
                Field::new(
                    "worst_corner",
                    c.worst_corner.clone().unwrap_or_else(|| "—".into()),
                ),
            ];
            f.extend(c.check.fields());
            t.push_row(f);
        }
        t
    }
    /// The consistency loop, one row per pass.
    pub fn consistency_table(&self) -> crate::report::Table {
        let mut t = crate::report::Table::new();
        for s in &self.consistency {
            t.push_row(vec![
                Field::new("iteration", s.iteration as f64),
                Field::new("loss_fraction_used", s.loss_fraction_used),
                Field::new("loss_fraction_computed", s.loss_fraction_computed),
                Field::quantity("leakage_used", s.leakage_used),
                Field::quantity("leakage_computed", s.leakage_computed),
                Field::quantity("primary_inductance", s.primary_inductance),
                Field::new("efficiency", s.efficiency),
            ]);
        }
        t
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn demo() -> SupplySpec {
        SupplySpec::from_json(serde_json::json!({
            "power_stage": {"output_voltage": "12 V", "output_current": "1.25 A"},
            "transformer": {"core": "E30/15/7"},
        }))
        .unwrap()
    }

    #[test]
    fn not_converging_is_an_error_naming_the_residuals() {
        let s = demo();
        let fs = flyback_spec_of(&s.power_stage).unwrap();
        let ts = transformer_spec_of(&s.transformer).unwrap();
        // one pass cannot agree: the starting estimate (2 % of output power) is not the
        // transformer's computed loss
        let e = consistent_within(fs.clone(), ts.clone(), 1).unwrap_err();
        assert_eq!(e.kind(), crate::ErrorKind::Infeasible);
        assert!(
            e.to_string().contains("did not agree within 1 pass ("),
            "{e}"
        );
        // with the full budget it converges, in more than one pass
        let ok = consistent_within(fs, ts, MAX_CONSISTENCY_ITERATIONS).unwrap();
        assert!(ok.steps.len() > 1 && ok.steps.len() <= MAX_CONSISTENCY_ITERATIONS);
    }
}

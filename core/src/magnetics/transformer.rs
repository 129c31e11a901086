//! A flyback transformer from an operating point: turns, gap, flux at the current limit,
//! core and copper loss, winding build with insulation, leakage, temperature rise, rules
//! and a build sheet. Also core selection by area product.

use super::conductor::{skin_depth, VACUUM_PERMEABILITY as MU0};
use super::core_loss::{flyback_flux_segments, igse_loss_density};
use super::cores::Core;
use super::gap::{air_gap_for_inductance, GapPlacement, GapResult};
use super::material::FerriteMaterial;
use super::thermal::{insulation_class_limit, temperature_rise};
use super::winding::{
    choose_wire, layer_fit, winding_copper_loss, CopperLoss, LayerFit, WindingCurrent, WireChoice,
    WireInsulation, WireSystem,
};
use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::rules::{CheckResult, Comparison, Rule};
use crate::units::validate::{non_negative, number_within, positive, positive_number};
use crate::units::{
    si, ElectricCurrent, ElectricCurrentDensity, ElectricPotential, Frequency, Inductance, Length,
    MagneticFluxDensity, Power, Quantity, TemperatureInterval, ThermodynamicTemperature,
};
use std::f64::consts::PI;
use std::fmt::Write;

/// The house limits a [`TransformerSpec`] starts from (the script defaults of
/// `transformer_design`; common practice, no published source). A specification with another
/// value is reported as an overridden limit (`loosened` when it lets more through) in
/// [`transformer_checks`].
pub mod house_limits {
    /// Peak flux density at the worst-case current limit, hot (T).
    pub const MAX_FLUX_DENSITY_TESLA: f64 = 0.3;
    /// Margin below the 100 °C saturation flux density.
    pub const SATURATION_MARGIN: f64 = 0.1;
    /// Copper area over window area.
    pub const MAX_WINDOW_FILL: f64 = 0.35;
    /// RMS current density (A/m², 6 A/mm²).
    pub const MAX_CURRENT_DENSITY_A_PER_M2: f64 = 6.0e6;
    /// Temperature rise (K).
    pub const MAX_TEMPERATURE_RISE_KELVIN: f64 = 40.0;
    /// Layers per winding section.
    pub const MAX_LAYERS: u32 = 3;
}

/// The order of windings from the centre leg outwards.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum WindingOrder {
    /// Primary, secondary, bias.
    PrimarySecondaryBias,
    /// Half the primary, the secondary, the bias, the other half of the primary
    /// (interleaved: lower leakage and proximity loss).
    SplitPrimary,
}

impl WindingOrder {
    /// Reads `primary_secondary_bias` / `split_primary`.
    pub fn parse(text: &str) -> Result<Self> {
        match text.trim() {
            "primary_secondary_bias" | "primary_first" => Ok(WindingOrder::PrimarySecondaryBias),
            "split_primary" | "interleaved" => Ok(WindingOrder::SplitPrimary),
            o => Err(Error::unknown(format!(
                "unknown `winding_order` '{o}'; expected \"split_primary\" or \"primary_secondary_bias\""
            ))),
        }
    }
}

/// A bias (auxiliary) winding that powers the controller: the same description the flyback
/// specification uses, so one value serves both.
pub use crate::flyback::BiasWinding;

/// A further output winding besides the regulated one. It conducts over the same interval
/// as the regulated secondary (all secondaries are coupled to the same core flux).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AdditionalOutput {
    /// Output voltage wanted.
    pub voltage: ElectricPotential,
    /// Its rectifier's forward drop.
    pub rectifier_drop: ElectricPotential,
    /// Full-load DC current.
    pub current: ElectricCurrent,
}

/// The designed winding of one [`AdditionalOutput`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct AdditionalOutputResult {
    /// Turns.
    pub turns: u32,
    /// Output voltage with the integer turns: (Nk/Ns)·(Vo + Vf) − Vf,k.
    pub voltage: ElectricPotential,
    /// (actual − wanted)/wanted of the output voltage.
    pub voltage_error: f64,
    /// Share of the secondary ampere-turns this winding carries, Nk·Ik/Σ Nj·Ij.
    pub current_share: f64,
}

/// Everything the transformer design needs, explicit (fill from a flyback operating point).
#[derive(Clone, Debug, PartialEq)]
pub struct TransformerSpec {
    /// The core.
    pub core: Core,
    /// The ferrite material class.
    pub material: FerriteMaterial,
    /// Nominal primary inductance.
    pub primary_inductance: Inductance,
    /// Relative tolerance of the primary inductance (0.1 = ±10 %).
    pub inductance_tolerance: f64,
    /// Switching frequency.
    pub switching_frequency: Frequency,
    /// Peak primary current at the nominal design point (worst-case load and line).
    pub primary_peak_current: ElectricCurrent,
    /// Valley (start) primary current: zero in DCM, positive in CCM.
    pub primary_valley_current: ElectricCurrent,
    /// Switch duty cycle at the design point.
    pub duty_cycle: f64,
    /// Fraction of the period the secondary conducts (1 − D in CCM, t_reset/T in DCM;
    /// the rest is the dead time).
    pub secondary_conduction_fraction: f64,
    /// Peak-current limit of the controller (nominal).
    pub current_limit: ElectricCurrent,
    /// Relative tolerance of the current limit (0.1 = +10 % worst case).
    pub current_limit_tolerance: f64,
    /// Rise of the primary current past the highest current limit during the controller's
    /// sense delay, V_bulk·t_d/L (`flyback_design` computes it); added to I_lim·(1 + tol) for
    /// the flux at the current limit. Zero: no delay.
    pub current_limit_overshoot: ElectricCurrent,
    /// Highest primary peak with the output shorted (`flyback_design`'s short-circuit
    /// staircase); checked against saturation hot, not used for the turns. None: not checked.
    pub short_circuit_peak_current: Option<ElectricCurrent>,
    /// Reflected voltage target.
    pub reflected_voltage: ElectricPotential,
    /// Regulated output voltage.
    pub output_voltage: ElectricPotential,
    /// Output rectifier forward drop.
    pub rectifier_drop: ElectricPotential,
    /// Full-load DC current of the regulated output; needed with `additional_outputs` (the
    /// secondaries share the ampere-turns in proportion to Nk·Ik).
    pub output_current: Option<ElectricCurrent>,
    /// Further output windings (none for a single-output supply).
    pub additional_outputs: Vec<AdditionalOutput>,
    /// Optional bias winding.
    pub bias: Option<BiasWinding>,
    /// House limit: peak flux density at the worst-case current limit, hot.
    pub max_flux_density: MagneticFluxDensity,
    /// Required margin below the 100 °C saturation flux density (0.1 = 10 %).
    pub saturation_margin: f64,
    /// Core temperature for loss.
    pub core_temperature: ThermodynamicTemperature,
    /// Winding temperature for copper resistance.
    pub winding_temperature: ThermodynamicTemperature,
    /// Ambient temperature around the transformer.
    pub ambient_temperature: ThermodynamicTemperature,
    /// Gap placement.
    pub gap_placement: GapPlacement,
    /// Wire sizes from AWG or metric.
    pub wire_system: WireSystem,
    /// Enamel grade (1 … 3) for enamelled windings.
    pub enamel_grade: u8,
    /// True: the secondary is triple-insulated wire (no margin tape needed).
    pub secondary_triple_insulated: bool,
    /// True: the primary is litz wire of `litz_strand_diameter` strands.
    pub primary_litz: bool,
    /// True: the secondary is litz wire (not with a triple-insulated secondary).
    pub secondary_litz: bool,
    /// Strand diameter of litz windings.
    pub litz_strand_diameter: Length,
    /// Largest strand diameter; `None` takes two skin depths at the switching frequency.
    pub max_strand_diameter: Option<Length>,
    /// House limit: current density.
    pub max_current_density: ElectricCurrentDensity,
    /// House limit: copper area over window area.
    pub max_window_fill: f64,
    /// House limit: temperature rise.
    pub max_temperature_rise: TemperatureInterval,
    /// House limit: layers per winding section (proximity loss).
    pub max_layers: u32,
    /// Insulation layers required between primary and secondary (from the safety analysis).
    pub insulation_layers: u32,
    /// Tape layers between windings on the same side of the barrier.
    pub functional_tape_layers: u32,
    /// Thickness of one tape layer.
    pub tape_thickness: Length,
    /// Margin tape width on each side of each winding (creepage along the bobbin; half the
    /// required creepage is common); ignored with a triple-insulated secondary.
    pub margin_width: Length,
    /// Creepage required along the bobbin from primary to secondary windings (from the
    /// safety analysis); checked against the two margins it crosses. `None`: the check is
    /// listed as not applicable, with the reason.
    pub required_creepage: Option<Length>,
    /// Thermal resistance transformer-to-ambient, when known (measured or from a maker);
    /// `None` uses McLyman's surface fit.
    pub thermal_resistance: Option<crate::units::ThermalResistance>,
    /// Winding order.
    pub winding_order: WindingOrder,
    /// Insulation thermal class (A, E, B, F, H).
    pub insulation_class: String,
}

/// How the magnetising inductance of an existing transformer is known.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum GivenMagnetising {
    /// The gap as built (ground centre leg or spacer, per `gap_placement`); the inductance
    /// follows from [`super::inductance_for_air_gap`].
    Gap(Length),
    /// The primary inductance measured on the bench; the effective gap follows from
    /// [`super::effective_gap_from_inductance`] with the material's working permeability.
    MeasuredInductance(Inductance),
}

/// The turns and magnetising path of a transformer that already exists (a sample to audit
/// or rewind), for [`transformer_check`].
#[derive(Clone, Debug, PartialEq)]
pub struct GivenTransformer {
    /// Primary turns in all (both halves of a split primary together).
    pub primary_turns: u32,
    /// Turns of the first half of a split primary (the one next to the centre leg); None:
    /// half the primary turns, rounded up. Ignored for the `primary_secondary_bias` order.
    pub primary_first_half_turns: Option<u32>,
    /// Turns of the regulated secondary.
    pub secondary_turns: u32,
    /// Turns of each additional output, in the order of the specification's
    /// `additional_outputs`.
    pub additional_output_turns: Vec<u32>,
    /// Bias turns (needed when the specification has a bias winding).
    pub bias_turns: Option<u32>,
    /// The gap, or the measured inductance.
    pub magnetising: GivenMagnetising,
}

/// An existing transformer checked at the specification's operating point.
#[derive(Clone, Debug, PartialEq)]
pub struct TransformerCheck {
    /// Everything [`transformer_design`] reports, for the given turns and gap: flux at full
    /// load and at the worst-case current limit, saturation margin hot, fill, losses, rise.
    pub design: TransformerDesign,
    /// Primary inductance of the transformer (from the gap, or as measured).
    pub inductance: Inductance,
    /// (inductance − specified)/specified: a transformer far from the inductance the power
    /// stage was designed for moves its currents.
    pub inductance_error: f64,
}

impl Record for TransformerCheck {
    fn fields(&self) -> Vec<Field> {
        let mut v = vec![
            Field::quantity("inductance", self.inductance),
            Field::new("inductance_error", self.inductance_error),
        ];
        v.extend(self.design.fields());
        v
    }
}

/// Checks a transformer that already exists: the given turns for every winding and the gap
/// (or a measured inductance) on the given core, at the operating point of `spec`.
///
/// Same formulas and assumptions as [`transformer_design`], with the turns taken as given
/// instead of chosen and the inductance L from the gap (or measured): B_pk = L·I_pk/(Np·Ae),
/// B_limit = L·(1 + tol_L)·(I_lim·(1 + tol_I) + overshoot)/(Np·min(Amin, Ae)) (McLyman 2011,
/// chapter 8: B = L·I/(N·A)), the reflected and output voltages from the turns ratios. The
/// currents are those of `spec` (the power stage's operating point): when L differs from
/// `spec.primary_inductance` by more than its tolerance they no longer describe this
/// transformer, which [`transformer_check_rules`] reports. Fed the turns and gap that
/// [`transformer_design`] chose, it returns the same design.
pub fn transformer_check(
    spec: &TransformerSpec,
    given: &GivenTransformer,
) -> Result<TransformerCheck> {
    let design = transformer_build(spec, Some(given))?;
    let l_spec = spec.primary_inductance.value;
    let l = match given.magnetising {
        GivenMagnetising::MeasuredInductance(lm) => lm,
        GivenMagnetising::Gap(_) => design.gap.inductance,
    };
    Ok(TransformerCheck {
        inductance: l,
        inductance_error: (l.value - l_spec) / l_spec,
        design,
    })
}

/// The rules of [`transformer_checks`] for a checked transformer, and one more:
/// `inductance_within_tolerance`, |L − L_spec|/L_spec at most `inductance_tolerance`.
pub fn transformer_check_rules(
    spec: &TransformerSpec,
    c: &TransformerCheck,
) -> Result<Vec<CheckResult>> {
    let mut out = transformer_checks(spec, &c.design)?;
    out.push(rule(
        "inductance_within_tolerance",
        "primary inductance of the transformer against the one the power stage was designed for",
        "the specification's inductance tolerance",
        Comparison::AtMost,
        Quantity::number(spec.inductance_tolerance),
        Quantity::number(c.inductance_error.abs()),
    )?);
    Ok(out)
}

/// One winding section of the build.
#[derive(Clone, Debug, PartialEq)]
pub struct WindingSection {
    /// Name (`primary (first half)`, `secondary`, `bias`, …).
    pub name: String,
    /// Start pin label.
    pub start_pin: String,
    /// Finish pin label.
    pub finish_pin: String,
    /// Turns.
    pub turns: u32,
    /// Wire.
    pub wire: WireChoice,
    /// Layer fit.
    pub fit: LayerFit,
    /// Margin tape each side.
    pub margin: Length,
    /// Tape layers wound over this section.
    pub tape_layers_after: u32,
    /// Mean turn length of this section.
    pub mean_turn_length: Length,
    /// Copper loss.
    pub copper: CopperLoss,
    /// RMS current density.
    pub current_density: ElectricCurrentDensity,
}

/// The designed transformer.
#[derive(Clone, Debug, PartialEq)]
pub struct TransformerDesign {
    /// Core name.
    pub core_name: String,
    /// Material class name.
    pub material_name: String,
    /// Least primary turns for the flux limit at the worst-case current limit.
    pub minimum_primary_turns: f64,
    /// Primary turns.
    pub primary_turns: u32,
    /// Secondary turns.
    pub secondary_turns: u32,
    /// Bias turns (0 without a bias winding).
    pub bias_turns: u32,
    /// Share of the secondary ampere-turns the regulated secondary carries (1 without
    /// additional outputs).
    pub secondary_current_share: f64,
    /// The windings of the additional outputs, in the order given.
    pub additional_outputs: Vec<AdditionalOutputResult>,
    /// Turns ratio Np/Ns.
    pub turns_ratio: f64,
    /// Reflected voltage with the integer turns: (Np/Ns)·(Vo + Vf).
    pub reflected_voltage: ElectricPotential,
    /// (actual − target)/target of the reflected voltage.
    pub reflected_voltage_error: f64,
    /// Bias voltage with the integer turns.
    pub bias_voltage: ElectricPotential,
    /// (actual − wanted)/wanted of the bias voltage.
    pub bias_voltage_error: f64,
    /// Gap.
    pub gap: GapResult,
    /// Peak flux density at the nominal design point.
    pub flux_density_peak: MagneticFluxDensity,
    /// Peak-to-peak flux swing at the nominal design point.
    pub flux_density_swing_pp: MagneticFluxDensity,
    /// Peak flux density at the worst-case current limit (highest limit plus the sense-delay
    /// overshoot) with the inductance at its upper tolerance, in the smallest core section.
    pub flux_density_limit_peak: MagneticFluxDensity,
    /// Saturation flux density at 100 °C.
    pub saturation_hot: MagneticFluxDensity,
    /// 1 − B_limit/Bsat(100 °C).
    pub saturation_margin: f64,
    /// Peak flux density with the output shorted, L·(1 + tol_L)·I_sc/(Np·min(Amin, Ae)) (None
    /// when no short-circuit peak is given).
    pub flux_density_short_circuit_peak: Option<MagneticFluxDensity>,
    /// Core loss (iGSE).
    pub core_loss: Power,
    /// Copper loss, all windings.
    pub copper_loss: Power,
    /// Total loss.
    pub total_loss: Power,
    /// Copper area over window area.
    pub window_fill: f64,
    /// Build height over bobbin winding height.
    pub build_fraction: f64,
    /// Leakage inductance referred to the primary (energy method).
    pub leakage_inductance: Inductance,
    /// Temperature rise (McLyman).
    pub temperature_rise: TemperatureInterval,
    /// Hot-spot estimate: ambient + rise.
    pub hot_spot: ThermodynamicTemperature,
    /// Insulation layers between primary and secondary in the build (3 for a
    /// triple-insulated secondary: its own three layers).
    pub insulation_layers_present: u32,
    /// The winding sections, from the centre leg outwards.
    pub sections: Vec<WindingSection>,
    /// Skin depth at the switching frequency and winding temperature.
    pub skin_depth: Length,
}

fn q<T: crate::units::TypedQuantity>(x: T) -> Quantity {
    Quantity::from_typed(x)
}

/// Designs the transformer.
///
/// Steps and formulas: Np,min = L·(1 + tol_L)·(I_lim·(1 + tol_I) + overshoot)/(B_max·min(Amin, Ae))
/// (overshoot: `current_limit_overshoot`, the rise during the sense delay); Ns is the
/// smallest integer with Np = round(Ns·V_or/(Vo + Vf)) ≥ Np,min; V_or = (Np/Ns)·(Vo + Vf);
/// Nb = round(Ns·(Vb + Vfb)/(Vo + Vf)); the gap by [`air_gap_for_inductance`] (McLyman
/// fringing, iterated); B_pk = L·I_pk/(Np·Ae); ΔB = L·(I_pk − I_valley)/(Np·Ae); core loss
/// by iGSE ([`igse_loss_density`]) × ct(T) × Ve; wires by [`choose_wire`]; layers by
/// [`layer_fit`]; copper loss by Dowell per harmonic ([`winding_copper_loss`]); leakage by
/// the MMF energy method L_lk = µ0·Σ MLT·∫MMF²dx / b_w (secondary shorted, bias open;
/// Kazimierczuk 2014, chapter on leakage / Erickson & Maksimović 3rd ed., magnetics
/// chapter); ΔT = 450·(P/At)^0.826 (McLyman 2011, chapter 6), or Rθ·P when a thermal
/// resistance is given.
/// Additional outputs: Nk = round(Ns·(Vk + Vf,k)/(Vo + Vf)); all secondaries conduct together
/// with currents of one shape, each carrying the share sk = Nk·Ik/Σ Nj·Ij of the secondary
/// ampere-turns, so ik(t) = sk·(Np/Nk)·ip(t) (ideal coupling; the cross-regulation set by
/// leakage is not modelled). Leakage is referred to the primary with every secondary shorted.
/// Assumptions: the secondaries carry the whole reflected primary current
/// (conservative when a bias winding is present); the bias current is a triangle over the
/// secondary conduction time; all windings have the same direction and the layer
/// structure fills the bobbin width (Dowell's one-dimensional field).
pub fn transformer_design(spec: &TransformerSpec) -> Result<TransformerDesign> {
    transformer_build(spec, None)
}

/// The design with the turns chosen (`given` None) or given.
fn transformer_build(
    spec: &TransformerSpec,
    given: Option<&GivenTransformer>,
) -> Result<TransformerDesign> {
    let core = &spec.core;
    let mat = &spec.material;
    mat.validate()?;
    let l = positive("primary_inductance", spec.primary_inductance)?.value;
    let tol_l = number_within("inductance_tolerance", spec.inductance_tolerance, 0.0, 0.5)?;
    let fsw = positive("switching_frequency", spec.switching_frequency)?;
    let ip = positive("primary_peak_current", spec.primary_peak_current)?.value;
    let iv = non_negative("primary_valley_current", spec.primary_valley_current)?.value;
    if iv >= ip {
        return Err(Error::invalid(format!(
            "`primary_valley_current` ({} A) must be below `primary_peak_current` ({} A)",
            iv, ip
        )));
    }
    let duty = number_within("duty_cycle", spec.duty_cycle, 0.01, 0.95)?;
    let cs = number_within(
        "secondary_conduction_fraction",
        spec.secondary_conduction_fraction,
        0.01,
        0.99,
    )?;
    if duty + cs > 1.0 + 1e-9 {
        return Err(Error::invalid(format!(
            "`duty_cycle` + `secondary_conduction_fraction` = {:.4} exceeds 1",
            duty + cs
        )));
    }
    let ilim = positive("current_limit", spec.current_limit)?.value;
    let tol_i = number_within(
        "current_limit_tolerance",
        spec.current_limit_tolerance,
        0.0,
        0.5,
    )?;
    if ilim < ip * (1.0 - 1e-9) {
        return Err(Error::invalid(format!(
            "`current_limit` ({ilim} A) is below `primary_peak_current` ({ip} A): the design point cannot be reached"
        )));
    }
    let vor_target = positive("reflected_voltage", spec.reflected_voltage)?.value;
    let vo = positive("output_voltage", spec.output_voltage)?.value;
    let vf = non_negative("rectifier_drop", spec.rectifier_drop)?.value;
    let bmax = positive("max_flux_density", spec.max_flux_density)?.value;
    number_within("saturation_margin", spec.saturation_margin, 0.0, 0.9)?;
    let jmax = positive("max_current_density", spec.max_current_density)?;
    number_within("max_window_fill", spec.max_window_fill, 0.01, 1.0)?;
    positive("max_temperature_rise", spec.max_temperature_rise)?;
    if spec.max_layers == 0 {
        return Err(Error::invalid("`max_layers` must be at least 1"));
    }
    let tape = positive("tape_thickness", spec.tape_thickness)?.value;
    if spec.insulation_layers == 0 && !spec.secondary_triple_insulated {
        return Err(Error::invalid(
            "`insulation_layers` is 0 with an enamelled secondary: the tape is then the only \
             insulation between primary and secondary, and basic or reinforced insulation needs \
             at least one layer (reinforced thin-sheet insulation two or three, IEC 62368-1); \
             give the layers the safety analysis requires, or a triple-insulated secondary",
        ));
    }
    let margin = non_negative("margin_width", spec.margin_width)?;
    insulation_class_limit(&spec.insulation_class)?;

    // turns
    let ae = core.effective_area.value;
    let amin = core.minimum_area.value.min(ae);
    let overshoot = non_negative("current_limit_overshoot", spec.current_limit_overshoot)?.value;
    let ilim_max = ilim * (1.0 + tol_i) + overshoot;
    let np_min_at = |l_max: f64| l_max * ilim_max / (bmax * amin);
    let np_min = np_min_at(l * (1.0 + tol_l));
    let ratio = vor_target / (vo + vf);
    let (np, ns) = match given {
        None => {
            if !(np_min.is_finite() && np_min <= 100_000.0) {
                return Err(Error::infeasible(format!(
                    "the flux limit needs {np_min:.4e} primary turns; raise `max_flux_density` or choose a larger core"
                )));
            }
            let mut ns = 1u32;
            let np = loop {
                let np = (ns as f64 * ratio).round().max(1.0);
                if np >= np_min.ceil() {
                    break np as u32;
                }
                ns += 1;
                if ns > 10_000 {
                    return Err(Error::infeasible(
                        "no integer turns found below 10 000 secondary turns",
                    ));
                }
            };
            (np, ns)
        }
        Some(g) => {
            for (name, t) in [
                ("primary_turns", g.primary_turns),
                ("secondary_turns", g.secondary_turns),
            ] {
                if t == 0 || t > 100_000 {
                    return Err(Error::out_of_range(format!(
                        "`{name}` = {t} must be 1 … 100000 turns"
                    )));
                }
            }
            (g.primary_turns, g.secondary_turns)
        }
    };
    // the gap, and the inductance it gives (as designed, from the given gap, or measured)
    let gap = match given.map(|g| g.magnetising) {
        None => air_gap_for_inductance(
            core,
            np as f64,
            spec.primary_inductance,
            spec.gap_placement,
            mat.working_permeability,
        )?,
        Some(GivenMagnetising::Gap(g)) => super::gap::gap_for_given_length(
            core,
            np as f64,
            positive("gap", g).map_err(|e| {
                e.context("a flyback core stores its energy in a gap; for an ungapped core give its `measured_inductance` instead")
            })?,
            spec.gap_placement,
            mat.working_permeability,
        )?,
        Some(GivenMagnetising::MeasuredInductance(lm)) => {
            super::gap::effective_gap_from_inductance(
                core,
                np as f64,
                positive("measured_inductance", lm)?,
                None,
                spec.gap_placement,
                mat.working_permeability,
            )?
        }
    };
    // a measured inductance is taken as measured (the gap solver returns it to 1 pm of gap)
    let l = match given.map(|g| g.magnetising) {
        None => l,
        Some(GivenMagnetising::Gap(_)) => gap.inductance.value,
        Some(GivenMagnetising::MeasuredInductance(lm)) => lm.value,
    };
    let l_max = l * (1.0 + tol_l);
    let n = np as f64 / ns as f64;
    let vor = n * (vo + vf);
    let (nb, vb_actual, vb_err) = match &spec.bias {
        Some(b) => {
            let vb = positive("bias voltage", b.voltage)?.value;
            let vfb = non_negative("bias rectifier_drop", b.rectifier_drop)?.value;
            positive("bias current", b.current)?;
            let nb = match given {
                None => (ns as f64 * (vb + vfb) / (vo + vf)).round().max(1.0) as u32,
                Some(g) => match g.bias_turns {
                    Some(t) if t > 0 => t,
                    _ => return Err(Error::missing(
                        "`bias_turns` (at least 1) is needed: the specification has a bias winding",
                    )),
                },
            };
            let actual = nb as f64 / ns as f64 * (vo + vf) - vfb;
            (nb, actual, (actual - vb) / vb)
        }
        None => (0, 0.0, 0.0),
    };

    // additional outputs: turns, voltages and ampere-turn shares
    let mut extras = Vec::with_capacity(spec.additional_outputs.len());
    let mut weights = Vec::with_capacity(spec.additional_outputs.len());
    if let Some(g) = given {
        if g.additional_output_turns.len() != spec.additional_outputs.len() {
            return Err(Error::invalid(format!(
                "`additional_output_turns` lists {} windings, `additional_outputs` {}",
                g.additional_output_turns.len(),
                spec.additional_outputs.len()
            )));
        }
    }
    if !spec.additional_outputs.is_empty() {
        let io = match spec.output_current {
            Some(i) => positive("output_current", i)?.value,
            None => {
                return Err(Error::invalid(
                    "`output_current` (A) is needed with `additional_outputs`: the secondaries share the current in proportion to their output currents",
                ))
            }
        };
        weights.push(ns as f64 * io);
        for (k, o) in spec.additional_outputs.iter().enumerate() {
            let ctx = |e: Error| e.context(&format!("additional_outputs[{k}]"));
            let v = positive("voltage", o.voltage).map_err(ctx)?.value;
            let vfk = non_negative("rectifier_drop", o.rectifier_drop)
                .map_err(ctx)?
                .value;
            let ik = positive("current", o.current).map_err(ctx)?.value;
            let nk = match given {
                None => (ns as f64 * (v + vfk) / (vo + vf)).round().max(1.0) as u32,
                Some(g) if g.additional_output_turns[k] > 0 => g.additional_output_turns[k],
                Some(_) => {
                    return Err(Error::out_of_range(format!(
                        "`additional_output_turns[{k}]` must be at least 1 turn"
                    )))
                }
            };
            let actual = nk as f64 / ns as f64 * (vo + vf) - vfk;
            weights.push(nk as f64 * ik);
            extras.push(AdditionalOutputResult {
                turns: nk,
                voltage: si(actual),
                voltage_error: (actual - v) / v,
                current_share: 0.0,
            });
        }
    }
    let weight_sum: f64 = weights.iter().sum();
    let main_share = if weights.is_empty() {
        1.0
    } else {
        weights[0] / weight_sum
    };
    for (x, w) in extras.iter_mut().zip(weights.iter().skip(1)) {
        x.current_share = w / weight_sum;
    }

    // flux
    let b_pk = l * ip / (np as f64 * ae);
    let b_swing = l * (ip - iv) / (np as f64 * ae);
    let b_lim = l_max * ilim_max / (np as f64 * amin);
    let bsat = mat.saturation_100c.value;
    let sat_margin = 1.0 - b_lim / bsat;
    let b_short = match spec.short_circuit_peak_current {
        Some(i) => {
            Some(l_max * non_negative("short_circuit_peak_current", i)?.value / (np as f64 * amin))
        }
        None => None,
    };

    // core loss
    let period = 1.0 / fsw.value;
    let band = mat.band_at(fsw)?;
    let segs = flyback_flux_segments(si(b_swing), si(duty * period), si(cs * period), si(period))?;
    let pv =
        igse_loss_density(&band, &segs)?.value * mat.temperature_factor(spec.core_temperature)?;
    let core_loss = pv * core.effective_volume.value;

    // currents
    let primary_current = WindingCurrent {
        start_fraction: 0.0,
        conduction_fraction: duty,
        initial: si(iv),
        final_value: si(ip),
    };
    // a secondary of `turns` carrying `share` of the secondary ampere-turns
    let secondary_current_of = |turns: u32, share: f64| WindingCurrent {
        start_fraction: duty,
        conduction_fraction: cs,
        initial: si(share * np as f64 / turns as f64 * ip),
        final_value: si(share * np as f64 / turns as f64 * iv),
    };
    let secondary_current = secondary_current_of(ns, main_share);
    let bias_current = spec.bias.map(|b| WindingCurrent {
        start_fraction: duty,
        conduction_fraction: cs,
        initial: si(2.0 * b.current.value / cs),
        final_value: si(0.0),
    });

    // wires
    let delta = skin_depth(fsw, spec.winding_temperature)?;
    let dmax = match spec.max_strand_diameter {
        Some(d) => positive("max_strand_diameter", d)?,
        None => si(2.0 * delta.value),
    };
    let enamel = WireInsulation::Enamel(spec.enamel_grade);
    if spec.secondary_litz && spec.secondary_triple_insulated {
        return Err(Error::invalid(
            "`secondary_litz` and `secondary_triple_insulated` exclude each other",
        ));
    }
    let litz_d = positive("litz_strand_diameter", spec.litz_strand_diameter)?;
    let wp = if spec.primary_litz {
        choose_wire(
            primary_current.rms()?,
            jmax,
            litz_d,
            spec.wire_system,
            WireInsulation::Litz(0),
        )?
    } else {
        choose_wire(primary_current.rms()?, jmax, dmax, spec.wire_system, enamel)?
    };
    let secondary_wire = |current: &WindingCurrent| -> Result<WireChoice> {
        if spec.secondary_litz {
            choose_wire(
                current.rms()?,
                jmax,
                litz_d,
                spec.wire_system,
                WireInsulation::Litz(0),
            )
        } else {
            choose_wire(
                current.rms()?,
                jmax,
                dmax,
                spec.wire_system,
                if spec.secondary_triple_insulated {
                    WireInsulation::TripleInsulated
                } else {
                    enamel
                },
            )
        }
    };
    let ws = secondary_wire(&secondary_current)?;
    let wb = match bias_current {
        Some(c) => Some(choose_wire(c.rms()?, jmax, dmax, spec.wire_system, enamel)?),
        None => None,
    };
    let m: Length = if spec.secondary_triple_insulated {
        si(0.0)
    } else {
        margin
    };

    // sections: (name, start, finish, turns, wire, current, is_primary_side, is_main_secondary)
    struct Plan {
        name: String,
        start: String,
        finish: String,
        turns: u32,
        wire: WireChoice,
        current: WindingCurrent,
        primary_side: bool,
        mmf_per_primary_amp: f64,
    }
    let primary_plan = |name: &str, start: &str, finish: &str, turns: u32| Plan {
        name: name.to_string(),
        start: start.to_string(),
        finish: finish.to_string(),
        turns,
        wire: wp,
        current: primary_current,
        primary_side: true,
        mmf_per_primary_amp: turns as f64,
    };
    let mut secondary_plans = vec![Plan {
        name: "secondary".to_string(),
        start: "secondary rectifier (anode) pin".to_string(),
        finish: "secondary return pin".to_string(),
        turns: ns,
        wire: ws,
        current: secondary_current,
        primary_side: false,
        mmf_per_primary_amp: -(np as f64) * main_share,
    }];
    for (k, x) in extras.iter().enumerate() {
        let current = secondary_current_of(x.turns, x.current_share);
        secondary_plans.push(Plan {
            name: format!("secondary {}", k + 2),
            start: format!("output {} rectifier pin", k + 2),
            finish: format!("output {} return pin", k + 2),
            turns: x.turns,
            wire: secondary_wire(&current)?,
            current,
            primary_side: false,
            mmf_per_primary_amp: -(np as f64) * x.current_share,
        });
    }
    let bias_plan = match (wb, bias_current) {
        (Some(w), Some(c)) => Some(Plan {
            name: "bias".to_string(),
            start: "bias rectifier pin".to_string(),
            finish: "bias return pin".to_string(),
            turns: nb,
            wire: w,
            current: c,
            primary_side: true,
            mmf_per_primary_amp: 0.0,
        }),
        _ => None,
    };
    let mut plans = Vec::new();
    match spec.winding_order {
        WindingOrder::PrimarySecondaryBias => {
            plans.push(primary_plan(
                "primary",
                "drain pin",
                "bulk-capacitor (+) pin",
                np,
            ));
            plans.append(&mut secondary_plans);
            if let Some(b) = bias_plan {
                plans.push(b);
            }
        }
        WindingOrder::SplitPrimary => {
            let first = match given.and_then(|g| g.primary_first_half_turns) {
                Some(t) if t >= 1 && t <= np => t,
                Some(t) => {
                    return Err(Error::out_of_range(format!(
                        "`primary_first_half_turns` = {t} must be 1 … `primary_turns` ({np})"
                    )))
                }
                None => np.div_ceil(2),
            };
            let second = np - first;
            plans.push(primary_plan(
                "primary, first half",
                "drain pin",
                "primary tie pin (no connection)",
                first,
            ));
            plans.append(&mut secondary_plans);
            if let Some(b) = bias_plan {
                plans.push(b);
            }
            if second > 0 {
                plans.push(primary_plan(
                    "primary, second half",
                    "primary tie pin (no connection)",
                    "bulk-capacitor (+) pin",
                    second,
                ));
            }
        }
    }

    // build: positions, tapes, MLT, losses, leakage integral
    let bh = core.winding_height.value;
    let usable_width = (core.winding_width.value - 2.0 * m.value).max(1e-6);
    let mut x = 0.0;
    let mut mmf = 0.0;
    let mut leak_integral = 0.0; // Σ MLT·∫MMF² dx
    let mut sections = Vec::new();
    let mut insulation_present = u32::MAX;
    let mut copper_total = 0.0;
    let mut copper_area = 0.0;
    for (k, p) in plans.iter().enumerate() {
        let fit = layer_fit(p.turns, &p.wire, core.winding_width, m)?;
        let h = fit.build_height.value;
        let mlt = core.mean_turn_length.value + 2.0 * PI * (x + h / 2.0 - bh / 2.0);
        let mlt = mlt.max(core.mean_turn_length.value * 0.3);
        let copper = winding_copper_loss(
            &p.current,
            p.turns,
            &p.wire,
            &fit,
            si(mlt),
            fsw,
            spec.winding_temperature,
        )?;
        copper_total += copper.loss.value;
        copper_area += p.turns as f64 * p.wire.copper_area();
        // MMF ramps across the winding
        let m0 = mmf;
        let m1 = mmf + p.mmf_per_primary_amp;
        leak_integral += mlt * h * (m0 * m0 + m0 * m1 + m1 * m1) / 3.0;
        mmf = m1;
        x += h;
        // tape over this section
        let next_side = plans.get(k + 1).map(|n| n.primary_side);
        let crosses = next_side.is_some_and(|s| s != p.primary_side);
        let layers = if crosses {
            if spec.secondary_triple_insulated {
                spec.functional_tape_layers
            } else {
                spec.insulation_layers
            }
        } else if next_side.is_none() {
            spec.insulation_layers.max(spec.functional_tape_layers)
        } else {
            spec.functional_tape_layers
        };
        if crosses {
            let present = if spec.secondary_triple_insulated {
                3
            } else {
                layers
            };
            insulation_present = insulation_present.min(present);
        }
        let t = layers as f64 * tape;
        leak_integral += mlt * t * mmf * mmf;
        x += t;
        let density = si(p.current.rms()?.value / p.wire.copper_area());
        sections.push(WindingSection {
            name: p.name.clone(),
            start_pin: p.start.clone(),
            finish_pin: p.finish.clone(),
            turns: p.turns,
            wire: p.wire,
            fit,
            margin: m,
            tape_layers_after: layers,
            mean_turn_length: si(mlt),
            copper,
            current_density: density,
        });
    }
    if insulation_present == u32::MAX {
        insulation_present = 0;
    }
    let leakage = MU0 * leak_integral / usable_width;
    let total = core_loss + copper_total;
    let rise = match spec.thermal_resistance {
        Some(r) => super::thermal::temperature_rise_thermal_resistance(si(total), r)?,
        None => temperature_rise(si(total), core.surface_area)?,
    };
    let hot = spec.ambient_temperature.value + rise.value;
    for v in [
        b_pk,
        b_lim,
        core_loss,
        copper_total,
        leakage,
        rise.value,
        hot,
    ] {
        if !v.is_finite() {
            return Err(Error::infeasible(
                "the design produced a non-finite value; check the inputs",
            ));
        }
    }
    Ok(TransformerDesign {
        core_name: core.name.clone(),
        material_name: mat.name.clone(),
        minimum_primary_turns: np_min_at(l_max),
        primary_turns: np,
        secondary_turns: ns,
        bias_turns: nb,
        secondary_current_share: main_share,
        additional_outputs: extras,
        turns_ratio: n,
        reflected_voltage: si(vor),
        reflected_voltage_error: (vor - vor_target) / vor_target,
        bias_voltage: si(vb_actual),
        bias_voltage_error: vb_err,
        gap,
        flux_density_peak: si(b_pk),
        flux_density_swing_pp: si(b_swing),
        flux_density_limit_peak: si(b_lim),
        saturation_hot: si(bsat),
        saturation_margin: sat_margin,
        flux_density_short_circuit_peak: b_short.map(si),
        core_loss: si(core_loss),
        copper_loss: si(copper_total),
        total_loss: si(total),
        window_fill: copper_area / core.window_area.value,
        build_fraction: x / bh,
        leakage_inductance: si(leakage),
        temperature_rise: rise,
        hot_spot: si(hot),
        insulation_layers_present: insulation_present,
        sections,
        skin_depth: delta,
    })
}

crate::serialize_as_record!(TransformerDesign);

impl Record for TransformerDesign {
    fn fields(&self) -> Vec<Field> {
        let mut v = vec![
            Field::new("core", self.core_name.as_str()),
            Field::new("material", self.material_name.as_str()),
            Field::new("minimum_primary_turns", self.minimum_primary_turns),
            Field::new("primary_turns", self.primary_turns as i64),
            Field::new("secondary_turns", self.secondary_turns as i64),
            Field::new("bias_turns", self.bias_turns as i64),
            Field::new("secondary_current_share", self.secondary_current_share),
            Field::new("turns_ratio", self.turns_ratio),
            Field::quantity("reflected_voltage", self.reflected_voltage),
            Field::new("reflected_voltage_error", self.reflected_voltage_error),
            Field::quantity("bias_voltage", self.bias_voltage),
            Field::new("bias_voltage_error", self.bias_voltage_error),
            Field::quantity("gap", self.gap.gap),
            Field::quantity("gap_in_path", self.gap.gap_in_path),
            Field::quantity("inductance_factor", self.gap.inductance_factor),
            Field::new("fringing_factor", self.gap.fringing_factor),
            Field::quantity("flux_density_peak", self.flux_density_peak),
            Field::quantity("flux_density_swing_pp", self.flux_density_swing_pp),
            Field::quantity("flux_density_limit_peak", self.flux_density_limit_peak),
            Field::quantity("saturation_hot", self.saturation_hot),
            Field::new("saturation_margin", self.saturation_margin),
            Field::quantity("core_loss", self.core_loss),
            Field::quantity("copper_loss", self.copper_loss),
            Field::quantity("total_loss", self.total_loss),
            Field::new("window_fill", self.window_fill),
            Field::new("build_fraction", self.build_fraction),
            Field::quantity("leakage_inductance", self.leakage_inductance),
            Field::quantity("temperature_rise", self.temperature_rise),
            Field::quantity("hot_spot", self.hot_spot),
            Field::new(
                "insulation_layers_present",
                self.insulation_layers_present as i64,
            ),
            Field::quantity("skin_depth", self.skin_depth),
        ];
        if let Some(b) = self.flux_density_short_circuit_peak {
            v.push(Field::quantity("flux_density_short_circuit_peak", b));
        }
        for (k, x) in self.additional_outputs.iter().enumerate() {
            let key = format!("output_{}", k + 2);
            v.push(Field::new(format!("{key}.turns"), x.turns as i64));
            v.push(Field::quantity(format!("{key}.voltage"), x.voltage));
            v.push(Field::new(format!("{key}.voltage_error"), x.voltage_error));
            v.push(Field::new(format!("{key}.current_share"), x.current_share));
        }
        for s in &self.sections {
            let key = s.name.replace([',', ' '], "_").replace("__", "_");
            v.push(Field::new(format!("{key}.wire"), s.wire.describe()));
            v.push(Field::new(format!("{key}.layers"), s.fit.layers as i64));
            v.push(Field::quantity(
                format!("{key}.rms_current"),
                s.copper.rms_current,
            ));
            v.push(Field::quantity(
                format!("{key}.current_density"),
                s.current_density,
            ));
            v.push(Field::quantity(
                format!("{key}.dc_resistance"),
                s.copper.dc_resistance,
            ));
            v.push(Field::new(
                format!("{key}.resistance_factor"),
                s.copper.resistance_factor,
            ));
            v.push(Field::quantity(format!("{key}.copper_loss"), s.copper.loss));
        }
        v
    }
}

fn rule(
    id: &str,
    what: &str,
    reference: &str,
    cmp: Comparison,
    limit: Quantity,
    value: Quantity,
) -> Result<CheckResult> {
    Rule::new(id, what, reference, cmp, limit, 0.05)?.check(value)
}

/// A rule on a house limit: marked overridden when the spec's limit is not the house default.
fn house_rule(
    id: &str,
    what: &str,
    reference: &str,
    cmp: Comparison,
    (limit, default): (Quantity, Quantity),
    value: Quantity,
) -> Result<CheckResult> {
    Rule::new(id, what, reference, cmp, limit, 0.05)?
        .with_default(default)
        .check(value)
}

/// The design rules of a transformer: flux at the worst-case current limit against the
/// house limit and against hot saturation with margin, window fill, current density,
/// temperature rise, hot spot against the insulation class, layers per section, build
/// height, insulation layers present, creepage along the bobbin (listed as not applicable, with
/// the reason, when no creepage is required or the secondary is triple-insulated). House
/// limits other than [`house_limits`] are marked overridden.
pub fn transformer_checks(
    spec: &TransformerSpec,
    d: &TransformerDesign,
) -> Result<Vec<CheckResult>> {
    let num = Quantity::number;
    let mut out = vec![
        house_rule(
            "flux_at_current_limit",
            "peak flux density at the worst-case current limit, upper inductance tolerance, smallest section",
            "house rule",
            Comparison::AtMost,
            (
                q(spec.max_flux_density),
                Quantity::new(house_limits::MAX_FLUX_DENSITY_TESLA, q(spec.max_flux_density).dimension()),
            ),
            q(d.flux_density_limit_peak),
        )?,
        house_rule(
            "saturation_margin_hot",
            "margin of that flux density below saturation at 100 °C",
            "common practice, no published source",
            Comparison::AtLeast,
            (num(spec.saturation_margin), num(house_limits::SATURATION_MARGIN)),
            num(d.saturation_margin),
        )?,
        house_rule(
            "window_fill",
            "copper area over window area",
            "McLyman 2011, window utilisation (chapter 4); limit is a house rule",
            Comparison::AtMost,
            (num(spec.max_window_fill), num(house_limits::MAX_WINDOW_FILL)),
            num(d.window_fill),
        )?,
        rule(
            "build_fits_bobbin",
            "winding build height over bobbin winding height",
            "common practice, no published source",
            Comparison::AtMost,
            num(1.0),
            num(d.build_fraction),
        )?,
        house_rule(
            "temperature_rise",
            "temperature rise by McLyman's surface fit",
            "McLyman 2011, chapter 6; limit is a house rule",
            Comparison::AtMost,
            (
                q(spec.max_temperature_rise),
                Quantity::new(
                    house_limits::MAX_TEMPERATURE_RISE_KELVIN,
                    q(spec.max_temperature_rise).dimension(),
                ),
            ),
            q(d.temperature_rise),
        )?,
        rule(
            "hot_spot_insulation_class",
            "hot spot against the insulation thermal class",
            "IEC 60085 thermal classes",
            Comparison::AtMost,
            Quantity::celsius(insulation_class_limit(&spec.insulation_class)?),
            q(d.hot_spot),
        )?,
        rule(
            "insulation_layers_present",
            "insulation layers between primary and secondary in the build",
            "required count from the safety analysis (IEC 62368-1 thin-sheet rules)",
            Comparison::AtLeast,
            num(spec.insulation_layers as f64),
            num(d.insulation_layers_present as f64),
        )?,
    ];
    if let Some(b) = d.flux_density_short_circuit_peak {
        out.push(rule(
            "saturation_in_short_circuit",
            "peak flux density with the output shorted, upper inductance tolerance, smallest section, against saturation at 100 °C",
            "B = L·I/(N·A), McLyman 2011, chapter 8; the limit is the material's hot saturation",
            Comparison::AtMost,
            q(d.saturation_hot),
            q(b),
        )?);
    }
    // the creepage check is always listed: without a requirement, or with a
    // triple-insulated secondary, it says why it does not apply
    let along = q(si::<Length>(2.0 * spec.margin_width.value));
    let creepage_rule = |limit: Quantity| {
        Rule::new(
            "creepage_along_bobbin",
            "creepage from primary to secondary along the bobbin: the two margins it crosses",
            "required creepage from the safety analysis (IEC 62368-1 / IEC 60664-1)",
            Comparison::AtLeast,
            limit,
            0.05,
        )
    };
    match (spec.required_creepage, spec.secondary_triple_insulated) {
        (Some(c), false) => {
            let c = positive("required_creepage", c)?;
            out.push(creepage_rule(q(c))?.check(along)?);
        }
        (_, true) => out.push(creepage_rule(along)?.not_applicable(
            // no margin tape is wound with a triple-insulated secondary
            q(si::<Length>(0.0)),
            "the secondary is triple-insulated wire, whose own insulation is the barrier (no margin tape is crossed)",
        )),
        (None, false) => out.push(creepage_rule(along)?.not_applicable(
            along,
            &format!(
                "no `required_creepage` given, so the {} the margins provide ({} each side) is not compared with a requirement; give the creepage the safety analysis requires",
                along,
                Quantity::from_typed(spec.margin_width)
            ),
        )),
    }
    for s in &d.sections {
        let id = s.name.replace([',', ' '], "_").replace("__", "_");
        out.push(house_rule(
            &format!("current_density_{id}"),
            &format!("RMS current density in the {}", s.name),
            "house rule",
            Comparison::AtMost,
            (
                q(spec.max_current_density),
                Quantity::new(
                    house_limits::MAX_CURRENT_DENSITY_A_PER_M2,
                    q(spec.max_current_density).dimension(),
                ),
            ),
            q(s.current_density),
        )?);
        out.push(house_rule(
            &format!("layers_{id}"),
            &format!("layers of the {} (proximity loss)", s.name),
            "Dowell 1966: loss rises with layer count; limit is a house rule",
            Comparison::AtMost,
            (
                num(spec.max_layers as f64),
                num(house_limits::MAX_LAYERS as f64),
            ),
            num(s.fit.layers as f64),
        )?);
    }
    Ok(out)
}

/// The ordered winding instructions (our own format, Markdown-compatible text), with the
/// gap, the bench inductance check and the safety caution.
pub fn build_sheet(spec: &TransformerSpec, d: &TransformerDesign) -> String {
    let mut s = String::new();
    let mm = |x: Length| x.value * 1e3;
    let _ = writeln!(
        s,
        "# Transformer build sheet: {} core, {}",
        d.core_name, d.material_name
    );
    let _ = writeln!(s);
    let _ = writeln!(s, "{}", crate::SAFETY_CAUTION);
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "All windings are wound in the same direction (clockwise seen from the pin side). Each winding starts at the pin named first, so the starts are the non-dot ends and the flyback polarity holds."
    );
    let _ = writeln!(s);
    for (i, w) in d.sections.iter().enumerate() {
        let _ = writeln!(s, "## Step {}: {}", i + 1, w.name);
        let _ = writeln!(s, "- start: {}; finish: {}", w.start_pin, w.finish_pin);
        let _ = writeln!(s, "- turns: {} of {}", w.turns, w.wire.describe());
        let _ = writeln!(
            s,
            "- layers: {} ({} turns per layer), wound edge to edge across the bobbin",
            w.fit.layers, w.fit.turns_per_layer
        );
        if w.margin.value > 0.0 {
            let _ = writeln!(
                s,
                "- margin tape: {:.2} mm at each flange, built to the winding height",
                mm(w.margin)
            );
        }
        let _ = writeln!(
            s,
            "- then: {} layer(s) of tape, {:.3} mm each",
            w.tape_layers_after,
            mm(spec.tape_thickness)
        );
        let _ = writeln!(s);
    }
    let _ = writeln!(s, "## Gap and bench check");
    match spec.gap_placement {
        GapPlacement::CentreLeg => {
            let _ = writeln!(s, "- grind the centre leg: {:.3} mm in total (split between the halves as convenient)", mm(d.gap.gap));
        }
        GapPlacement::Spacer => {
            let _ = writeln!(
                s,
                "- spacer of {:.3} mm under all legs ({:.3} mm in the flux path)",
                mm(d.gap.gap),
                mm(d.gap.gap_in_path)
            );
        }
    }
    let _ = writeln!(
        s,
        "- primary inductance: {} ± {:.0} % (measure at a low level, e.g. 10 kHz); AL = {}",
        q(spec.primary_inductance),
        spec.inductance_tolerance * 100.0,
        q(d.gap.inductance_factor)
    );
    let _ = writeln!(
        s,
        "- leakage inductance, every secondary shorted: about {} (estimate)",
        q(d.leakage_inductance)
    );
    let _ = writeln!(
        s,
        "- varnish or impregnate per the insulation class {}; hipot test primary to secondary",
        spec.insulation_class
    );
    s
}

/// What core selection needs.
#[derive(Clone, Debug, PartialEq)]
pub struct CoreSelectionSpec {
    /// Primary inductance.
    pub primary_inductance: Inductance,
    /// Peak current at the worst-case current limit.
    pub peak_current: ElectricCurrent,
    /// Primary RMS current.
    pub primary_rms_current: ElectricCurrent,
    /// Total secondary RMS current referred to the primary (Σ I_s,rms·Ns/Np).
    pub secondary_rms_current_referred: ElectricCurrent,
    /// Peak flux density allowed.
    pub max_flux_density: MagneticFluxDensity,
    /// Current density allowed.
    pub max_current_density: ElectricCurrentDensity,
    /// Window utilisation Ku (copper over window; 0.2 … 0.3 for a safety-insulated
    /// flyback transformer, common practice).
    pub window_utilisation: f64,
    /// Restrict to these size names (a company's stock list); empty = all built-in.
    pub stock: Vec<String>,
}

/// One ranked core.
#[derive(Clone, Debug, PartialEq)]
pub struct CoreCandidate {
    /// The core.
    pub core: Core,
    /// Its area product Ae·Aw in m⁴.
    pub area_product: f64,
    /// Area product over the required one (≥ 1 fits).
    pub area_product_ratio: f64,
    /// Energy to store at the current limit, ½·L·I².
    pub energy: f64,
}

/// Ranks cores by area product: Ap,req = L·I_pk·(I_p,rms + I_s,rms,referred)/(Ku·J·B_max)
/// (Ae from the flux limit L·I_pk/(N·B_max), Aw from the copper N·ΣI_rms/(J·Ku)); returns
/// the cores with Ap ≥ Ap,req, smallest effective volume first. Reference: McLyman,
/// *Transformer and Inductor Design Handbook*, 4th ed. (2011), area-product method
/// (chapters on inductor and flyback design).
pub fn core_selection(spec: &CoreSelectionSpec) -> Result<Vec<CoreCandidate>> {
    let l = positive("primary_inductance", spec.primary_inductance)?.value;
    let ipk = positive("peak_current", spec.peak_current)?.value;
    let ip = positive("primary_rms_current", spec.primary_rms_current)?.value;
    let is = non_negative(
        "secondary_rms_current_referred",
        spec.secondary_rms_current_referred,
    )?
    .value;
    let b = positive("max_flux_density", spec.max_flux_density)?.value;
    let j = positive("max_current_density", spec.max_current_density)?.value;
    let ku = positive_number("window_utilisation", spec.window_utilisation)?;
    number_within("window_utilisation", ku, 0.01, 1.0)?;
    let req = l * ipk * (ip + is) / (ku * j * b);
    let mut all = super::cores::core_shapes()?;
    if !spec.stock.is_empty() {
        let mut chosen = Vec::new();
        for name in &spec.stock {
            chosen.push(super::cores::core_by_size(name)?);
        }
        all = chosen;
        all.sort_by(|a, b| {
            a.effective_volume
                .value
                .total_cmp(&b.effective_volume.value)
        });
    }
    Ok(all
        .into_iter()
        .map(|c| {
            let ap = c.area_product();
            CoreCandidate {
                area_product_ratio: ap / req,
                area_product: ap,
                energy: 0.5 * l * ipk * ipk,
                core: c,
            }
        })
        .filter(|c| c.area_product_ratio >= 1.0)
        .collect())
}

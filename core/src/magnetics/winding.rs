//! Windings: current waveforms and their harmonics, Dowell's AC resistance factor, wire
//! choice by current density and skin depth, layer fit, DC and AC copper loss.

use super::conductor::{copper_resistivity, skin_depth};
use super::wire::{awg_diameter, metric_wire_at_or_above, AWG_RANGE};
use crate::error::{Error, Result};
use crate::units::validate::{non_negative, number_within, positive, positive_number};
use crate::units::{
    si, ElectricCurrent, ElectricalResistance, Frequency, Length, Power, ThermodynamicTemperature,
};
use std::f64::consts::PI;

/// The current of one winding over a switching period: zero, except for one conduction
/// interval starting at `start_fraction`·T and lasting `conduction_fraction`·T, during which
/// it ramps linearly from `initial` to `final_value`. A CCM primary is a trapezoid from
/// valley to peak; a DCM primary a triangle from zero; a secondary starts at the turn-off
/// instant and ramps down (to zero in DCM, followed by the dead time).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct WindingCurrent {
    /// Where conduction starts, as a fraction of the period (0 … 1).
    pub start_fraction: f64,
    /// How long it conducts, as a fraction of the period (0 … 1).
    pub conduction_fraction: f64,
    /// Current at the start of conduction.
    pub initial: ElectricCurrent,
    /// Current at the end of conduction.
    pub final_value: ElectricCurrent,
}

impl WindingCurrent {
    fn check(&self) -> Result<(f64, f64, f64, f64)> {
        let s = number_within("start_fraction", self.start_fraction, 0.0, 1.0)?;
        let c = number_within("conduction_fraction", self.conduction_fraction, 0.0, 1.0)?;
        if c == 0.0 {
            return Err(Error::invalid("`conduction_fraction` must be above zero"));
        }
        let i0 = non_negative("initial current", self.initial)?.value;
        let i1 = non_negative("final current", self.final_value)?.value;
        Ok((s, c, i0, i1))
    }
    /// Average (DC) value: c·(i0 + i1)/2.
    pub fn average(&self) -> Result<ElectricCurrent> {
        let (_, c, i0, i1) = self.check()?;
        Ok(si(c * (i0 + i1) / 2.0))
    }
    /// RMS value: √(c·(i0² + i0·i1 + i1²)/3).
    pub fn rms(&self) -> Result<ElectricCurrent> {
        let (_, c, i0, i1) = self.check()?;
        Ok(si((c * (i0 * i0 + i0 * i1 + i1 * i1) / 3.0).sqrt()))
    }
    /// Peak value.
    pub fn peak(&self) -> Result<ElectricCurrent> {
        let (_, _, i0, i1) = self.check()?;
        Ok(si(i0.max(i1)))
    }
    /// RMS values of harmonics 1 … `count` from the closed-form Fourier integrals of the
    /// linear ramp: aₙ = 2∫ i(t)·cos(2πnt) dt, bₙ = 2∫ i(t)·sin(2πnt) dt over one period
    /// of unit length, Iₙ = √(aₙ² + bₙ²)/√2. Reference: any Fourier-series text, e.g.
    /// Erickson & Maksimović, *Fundamentals of Power Electronics*, 3rd ed. (2020), appendix
    /// on Fourier series (value-free: a formula, cross-checked against an FFT in tests).
    pub fn harmonics_rms(&self, count: usize) -> Result<Vec<ElectricCurrent>> {
        let (t0, c, i0, i1) = self.check()?;
        let t1 = t0 + c;
        let s = (i1 - i0) / c;
        let mut out = Vec::with_capacity(count);
        // sin(nθ), cos(nθ) at both ends by the angle-addition recurrence from one sin_cos
        // each (θ = 2πt): the rounding grows by about one unit per harmonic, some 1e-14 at
        // the hundredth, far below the precision results are given to
        let (sin_step0, cos_step0) = (2.0 * PI * t0).sin_cos();
        let (sin_step1, cos_step1) = (2.0 * PI * t1).sin_cos();
        let (mut sin0, mut cos0) = (0.0f64, 1.0f64);
        let (mut sin1, mut cos1) = (0.0f64, 1.0f64);
        let a0 = i0 - s * t0;
        for n in 1..=count {
            let k = 2.0 * PI * n as f64;
            (sin0, cos0) = (
                sin0 * cos_step0 + cos0 * sin_step0,
                cos0 * cos_step0 - sin0 * sin_step0,
            );
            (sin1, cos1) = (
                sin1 * cos_step1 + cos1 * sin_step1,
                cos1 * cos_step1 - sin1 * sin_step1,
            );
            // ∫ (i0 + s(t − t0))·cos(kt) dt and ·sin(kt) dt on [t0, t1]
            let prims = |t: f64, sin: f64, cos: f64| {
                (
                    a0 * sin / k + s * (cos / (k * k) + t * sin / k),
                    -a0 * cos / k + s * (sin / (k * k) - t * cos / k),
                )
            };
            let ((c1, s1), (c0, s0)) = (prims(t1, sin1, cos1), prims(t0, sin0, cos0));
            let a = 2.0 * (c1 - c0);
            let b = 2.0 * (s1 - s0);
            out.push(si((a * a + b * b).sqrt() / 2f64.sqrt()));
        }
        Ok(out)
    }
}

/// Dowell's AC-to-DC resistance ratio of a winding of `layers` layers with the penetration
/// ratio Δ (conductor thickness over skin depth, porosity included):
/// Fr = Δ·[(sinh 2Δ + sin 2Δ)/(cosh 2Δ − cos 2Δ) + (2(m² − 1)/3)·(sinh Δ − sin Δ)/(cosh Δ + cos Δ)].
/// Assumes a sinusoidal current and a one-dimensional field (layers filling the window
/// width). Fr → 1 as Δ → 0 (series expansion used for Δ < 1e-3) and rises with the number
/// of layers; for Δ > 20 the hyperbolic ratios are 1 to double precision and the limit
/// Δ·(1 + 2(m² − 1)/3) is used. Valid for Δ ≥ 0 and m ≥ 1 (fractional layer counts
/// allowed). Reference: P. L. Dowell, "Effects of eddy currents in transformer windings",
/// Proc. IEE, 1966; Kazimierczuk, *High-Frequency Magnetic Components*, 2nd ed. (2014),
/// chapter 5.
pub fn dowell_resistance_factor(penetration_ratio: f64, layers: f64) -> Result<f64> {
    let d = penetration_ratio;
    if !(d.is_finite() && d >= 0.0) {
        return Err(Error::invalid(format!(
            "`penetration_ratio` must be a finite number of zero or more, got {d}"
        )));
    }
    let m = number_within("layers", layers, 1.0, 1000.0)?;
    let p = 2.0 * (m * m - 1.0) / 3.0;
    if d < 1e-3 {
        // Fr ≈ 1 + (4/45)·Δ⁴ + p·Δ⁴/6 (leading terms of the expansion)
        let d4 = d.powi(4);
        return Ok(1.0 + 4.0 / 45.0 * d4 + p * d4 / 6.0);
    }
    if d > 20.0 {
        return Ok(d * (1.0 + p));
    }
    // one exponential and one sine/cosine pair give every hyperbolic and circular term
    // (double-angle identities); the same value to about 1e-9 relative at Δ = 1e-3, where
    // sinh Δ − sin Δ cancels, and to round-off above
    let e = d.exp();
    let (sinh, cosh) = (0.5 * (e - 1.0 / e), 0.5 * (e + 1.0 / e));
    let (sin, cos) = d.sin_cos();
    let (sinh2, cosh2) = (2.0 * sinh * cosh, 2.0 * cosh * cosh - 1.0);
    let (sin2, cos2) = (2.0 * sin * cos, 1.0 - 2.0 * sin * sin);
    let first = (sinh2 + sin2) / (cosh2 - cos2);
    let second = (sinh - sin) / (cosh + cos);
    Ok(d * (first + p * second))
}

/// Penetration ratio of a layer of round wires: Δ = (π/4)^(3/4)·(d/δ)·√(d/p), with d the
/// bare diameter, δ the skin depth and p the centre-to-centre pitch of turns in the layer.
/// Reference: Kazimierczuk (2014), chapter 5 (round wire as an equivalent foil).
pub fn round_wire_penetration_ratio(diameter: Length, skin: Length, pitch: Length) -> Result<f64> {
    let d = positive("diameter", diameter)?.value;
    let delta = positive("skin depth", skin)?.value;
    let p = positive("pitch", pitch)?.value;
    let eta = (d / p).min(1.0);
    Ok((PI / 4.0).powf(0.75) * d / delta * eta.sqrt())
}

/// Wire systems for sizes.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum WireSystem {
    /// American Wire Gauge (ASTM B258).
    Awg,
    /// Metric nominal diameters (R20 series).
    Metric,
}

impl WireSystem {
    /// Reads `awg` / `metric`.
    pub fn parse(text: &str) -> Result<Self> {
        match text.trim() {
            "awg" | "AWG" => Ok(WireSystem::Awg),
            "metric" => Ok(WireSystem::Metric),
            o => Err(Error::unknown(format!(
                "unknown wire system '{o}'; expected \"awg\" or \"metric\""
            ))),
        }
    }
}

/// The insulation of the wire.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum WireInsulation {
    /// Enamelled wire of grade 1, 2 or 3 (IEC 60317 builds).
    Enamel(u8),
    /// Triple-insulated wire (each layer passes the electric-strength test on its own).
    TripleInsulated,
    /// Litz wire of this many enamelled strands.
    Litz(u32),
}

impl WireInsulation {
    /// Text for results and build sheets.
    pub fn describe(self) -> String {
        match self {
            WireInsulation::Enamel(g) => format!("enamelled grade {g}"),
            WireInsulation::TripleInsulated => "triple-insulated".into(),
            WireInsulation::Litz(n) => format!("litz {n} strands"),
        }
    }
}

/// A chosen wire: strand size, strands in parallel, insulation.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct WireChoice {
    /// Bare diameter of one strand.
    pub strand_diameter: Length,
    /// AWG number of the strand, if the AWG system was used.
    pub gauge: Option<i64>,
    /// Strands wound in parallel (side by side) or twisted (litz).
    pub strands: u32,
    /// Insulation.
    pub insulation: WireInsulation,
    /// Overall diameter of one strand with its insulation (litz: of the whole bundle).
    pub overall_diameter: Length,
}

/// Overall diameter of a round wire from its bare diameter: enamel grade 1 adds
/// 0.015 mm + 4 % of d, grade 2 adds 0.025 mm + 7 %, grade 3 adds 0.035 mm + 10 %
/// (an approximation of IEC 60317-0-1 maximum overall diameters, value recalled from
/// memory); triple-insulated wire adds 0.2 mm (common practice, no published source).
pub fn overall_diameter(bare: Length, insulation: WireInsulation) -> Result<Length> {
    let d = positive("diameter", bare)?.value * 1e3;
    let o = match insulation {
        WireInsulation::Enamel(1) => d + 0.015 + 0.04 * d,
        WireInsulation::Enamel(2) => d + 0.025 + 0.07 * d,
        WireInsulation::Enamel(3) => d + 0.035 + 0.10 * d,
        WireInsulation::Enamel(g) => {
            return Err(Error::out_of_range(format!(
                "`enamel_grade` = {g} is outside 1 … 3"
            )))
        }
        WireInsulation::TripleInsulated => d + 0.2,
        WireInsulation::Litz(n) => {
            // bundle of n grade-1 strands, hexagonal packing with serving: 1.155·√n·d1
            let d1 = d + 0.015 + 0.04 * d;
            1.155 * (n as f64).sqrt() * d1 + 0.03
        }
    };
    Ok(si(o * 1e-3))
}

/// The smallest AWG size (largest gauge number) whose diameter is at least `d`.
fn awg_at_or_above(d: f64) -> Result<(i64, f64)> {
    let mut best = None;
    for g in (AWG_RANGE.0..=AWG_RANGE.1).rev() {
        let dg = awg_diameter(g)?.value;
        if dg >= d * (1.0 - 1e-9) {
            best = Some((g, dg));
            break;
        }
    }
    best.ok_or_else(|| {
        Error::out_of_range(format!(
            "no AWG size reaches {:.3} mm; use parallel strands",
            d * 1e3
        ))
    })
}

/// The largest size not above `d` (for the strand limit).
fn size_at_or_below(system: WireSystem, d: f64) -> Result<(Option<i64>, f64)> {
    match system {
        WireSystem::Awg => {
            for g in AWG_RANGE.0..=AWG_RANGE.1 {
                let dg = awg_diameter(g)?.value;
                if dg <= d * (1.0 + 1e-9) {
                    return Ok((Some(g), dg));
                }
            }
            Err(Error::out_of_range(format!(
                "no AWG size is as thin as {:.4} mm",
                d * 1e3
            )))
        }
        WireSystem::Metric => {
            let sizes = super::wire::metric_wire_diameters();
            sizes
                .iter()
                .rev()
                .find(|s| s.value <= d * (1.0 + 1e-9))
                .map(|s| (None, s.value))
                .ok_or_else(|| {
                    Error::out_of_range(format!("no metric size is as thin as {:.4} mm", d * 1e3))
                })
        }
    }
}

const MIN_WOUND_DIAMETER: f64 = 0.1e-3;

/// Chooses a wire for an RMS current: copper area I_rms/J_max; one strand when its
/// diameter fits under `max_strand_diameter` (commonly two skin depths at the switching
/// frequency), otherwise that largest allowed strand size in parallel (or as litz strands).
/// Sizes from ASTM B258 (AWG) or the metric R20 series; no strand thinner than 0.1 mm is
/// chosen (thinner wire breaks when wound by hand), unless the strand limit is thinner.
/// Reference for the two-skin-depth rule and the 0.1 mm floor: common practice, no
/// published source.
pub fn choose_wire(
    rms_current: ElectricCurrent,
    max_current_density: crate::units::ElectricCurrentDensity,
    max_strand_diameter: Length,
    system: WireSystem,
    insulation: WireInsulation,
) -> Result<WireChoice> {
    let i = positive("rms_current", rms_current)?.value;
    let j = positive("max_current_density", max_current_density)?.value;
    let dmax = positive("max_strand_diameter", max_strand_diameter)?.value;
    let area = i / j;
    let d_one = (4.0 * area / PI).sqrt().max(MIN_WOUND_DIAMETER.min(dmax));
    let single = match system {
        WireSystem::Awg => awg_at_or_above(d_one).ok().map(|(g, d)| (Some(g), d)),
        WireSystem::Metric => metric_wire_at_or_above(si(d_one))
            .ok()
            .map(|d| (None, d.value)),
    };
    let litz = matches!(insulation, WireInsulation::Litz(_));
    let (gauge, d, strands) = match single {
        Some((g, d)) if d <= dmax * (1.0 + 1e-9) && !litz => (g, d, 1u32),
        _ => {
            let (g, d) = size_at_or_below(system, dmax)?;
            let n = (area / (PI * d * d / 4.0)).ceil().max(1.0);
            if n > 10_000.0 {
                return Err(Error::infeasible(format!(
                    "{n} strands would be needed; raise the strand diameter limit"
                )));
            }
            (g, d, n as u32)
        }
    };
    let insulation = match insulation {
        WireInsulation::Litz(_) => WireInsulation::Litz(strands),
        other => other,
    };
    let overall = overall_diameter(si(d), insulation)?;
    Ok(WireChoice {
        strand_diameter: si(d),
        gauge,
        strands,
        insulation,
        overall_diameter: overall,
    })
}

impl WireChoice {
    /// Copper cross-section of all strands.
    pub fn copper_area(&self) -> f64 {
        self.strands as f64 * PI * self.strand_diameter.value.powi(2) / 4.0
    }
    /// Width one turn takes in a layer: litz is one bundle; parallel strands lie side by side.
    pub fn turn_width(&self) -> f64 {
        match self.insulation {
            WireInsulation::Litz(_) => self.overall_diameter.value,
            _ => self.strands as f64 * self.overall_diameter.value,
        }
    }
    /// Text such as `2 × 0.45 mm enamelled grade 2` or `1 × AWG 24 triple-insulated`.
    pub fn describe(&self) -> String {
        let size = match self.gauge {
            Some(g) => format!("AWG {g} ({:.3} mm)", self.strand_diameter.value * 1e3),
            None => format!("{:.3} mm", self.strand_diameter.value * 1e3),
        };
        match self.insulation {
            WireInsulation::Litz(n) => format!("litz {n} × {size}"),
            other => format!("{} × {size} {}", self.strands, other.describe()),
        }
    }
}

/// How a winding fits on the bobbin.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LayerFit {
    /// Turns that fit in one layer: ⌊(winding width − 2·margin)/turn width⌋.
    pub turns_per_layer: u32,
    /// Layers: ⌈N/turns per layer⌉.
    pub layers: u32,
    /// Build height of the winding: layers × overall diameter.
    pub build_height: Length,
}

/// Layers of a winding of `turns` turns on a bobbin width less margin tape on both sides.
/// An error when not even one turn fits.
pub fn layer_fit(
    turns: u32,
    wire: &WireChoice,
    winding_width: Length,
    margin: Length,
) -> Result<LayerFit> {
    if turns == 0 {
        return Err(Error::invalid("`turns` must be at least 1"));
    }
    let w = positive("winding_width", winding_width)?.value;
    let m = non_negative("margin", margin)?.value;
    let usable = w - 2.0 * m;
    let tpl = (usable / wire.turn_width()).floor();
    if tpl.is_nan() || tpl < 1.0 {
        return Err(Error::infeasible(format!(
            "not one turn of {} fits in {:.3} mm of bobbin width less 2 × {:.3} mm margin",
            wire.describe(),
            w * 1e3,
            m * 1e3
        )));
    }
    let tpl = tpl.min(1e6) as u32;
    let layers = turns.div_ceil(tpl);
    Ok(LayerFit {
        turns_per_layer: tpl,
        layers,
        build_height: si(layers as f64 * wire.overall_diameter.value),
    })
}

/// Copper loss of a winding with a given current waveform.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CopperLoss {
    /// DC resistance at the winding temperature: ρ(T)·N·MLT/(strands·π·d²/4).
    pub dc_resistance: ElectricalResistance,
    /// Effective AC resistance: loss / I_rms².
    pub effective_resistance: ElectricalResistance,
    /// Ratio of effective to DC resistance over the whole waveform.
    pub resistance_factor: f64,
    /// RMS current.
    pub rms_current: ElectricCurrent,
    /// Loss.
    pub loss: Power,
}

/// Copper loss by Dowell per harmonic: P = R_dc·(I_dc² + Σₙ Fr(Δ·√n, m)·Iₙ²), with
/// Δ = [`round_wire_penetration_ratio`] at the fundamental (skin depth at f at the winding
/// temperature) and the harmonic's skin depth δ/√n; 200 harmonics. For litz the strand is
/// the conductor and the effective layer count is m·√strands (a common approximation, no
/// published source). Reference: Dowell 1966; Kazimierczuk (2014), chapter 5 (harmonic
/// treatment of non-sinusoidal currents).
#[allow(clippy::too_many_arguments)]
pub fn winding_copper_loss(
    current: &WindingCurrent,
    turns: u32,
    wire: &WireChoice,
    fit: &LayerFit,
    mean_turn_length: Length,
    frequency: Frequency,
    temperature: ThermodynamicTemperature,
) -> Result<CopperLoss> {
    let mlt = positive("mean_turn_length", mean_turn_length)?.value;
    let rho = copper_resistivity(temperature)?.value;
    let rdc = rho * turns as f64 * mlt / wire.copper_area();
    let delta = skin_depth(frequency, temperature)?.value;
    let pitch = wire.overall_diameter.value;
    let d = wire.strand_diameter.value;
    let layers = match wire.insulation {
        WireInsulation::Litz(n) => fit.layers as f64 * (n as f64).sqrt(),
        _ => fit.layers as f64,
    };
    let strand_pitch = match wire.insulation {
        WireInsulation::Litz(n) => pitch / (n as f64).sqrt(),
        _ => pitch,
    };
    let base = round_wire_penetration_ratio(si(d), si(delta), si(strand_pitch))?;
    let idc = current.average()?.value;
    let irms = current.rms()?.value;
    let mut p = idc * idc;
    for (k, h) in current.harmonics_rms(200)?.iter().enumerate() {
        let n = (k + 1) as f64;
        p += dowell_resistance_factor(base * n.sqrt(), layers.max(1.0))? * h.value * h.value;
    }
    // harmonics above 200 carry a vanishing share; count their DC-resistance loss
    let captured: f64 = idc * idc
        + current
            .harmonics_rms(200)?
            .iter()
            .map(|h| h.value * h.value)
            .sum::<f64>();
    p += (irms * irms - captured).max(0.0);
    let loss = rdc * p;
    let factor = if irms > 0.0 { p / (irms * irms) } else { 1.0 };
    positive_number("resistance factor", factor)?;
    Ok(CopperLoss {
        dc_resistance: si(rdc),
        effective_resistance: si(rdc * factor),
        resistance_factor: factor,
        rms_current: si(irms),
        loss: si(loss),
    })
}

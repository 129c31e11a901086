//! Air gap and inductance: reluctance with McLyman's fringing factor, gap for a target
//! inductance, inductance from a gap, AL value, and the bench workflow (spacer from a
//! measured ungapped inductance; effective gap from a measured gapped inductance).

use super::conductor::VACUUM_PERMEABILITY as MU0;
use super::cores::Core;
use crate::error::{Error, Result};
use crate::numeric::{brent, Sample, Tolerance};
use crate::report::{Field, Record};
use crate::units::validate::{finite_result, non_negative, positive, positive_number};
use crate::units::{si, Inductance, Length};

/// Where the gap is made.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum GapPlacement {
    /// Ground into the centre leg only: one gap in the flux path.
    CentreLeg,
    /// A spacer under all legs: the gap appears in the centre leg and again in the outer
    /// legs, so the flux crosses it twice.
    Spacer,
}

impl GapPlacement {
    /// Reads `centre_leg` / `spacer`.
    pub fn parse(text: &str) -> Result<Self> {
        match text.trim() {
            "centre_leg" | "center_leg" | "ground" => Ok(GapPlacement::CentreLeg),
            "spacer" | "all_legs" => Ok(GapPlacement::Spacer),
            other => Err(Error::unknown(format!(
                "unknown `gap_placement` '{other}'; expected \"centre_leg\" or \"spacer\""
            ))),
        }
    }
    /// The word used in results.
    pub fn as_str(self) -> &'static str {
        match self {
            GapPlacement::CentreLeg => "centre_leg",
            GapPlacement::Spacer => "spacer",
        }
    }
}

/// McLyman's fringing factor F = 1 + (lg/√A)·ln(2·G/lg), with lg one gap, A the leg area
/// and G the window height (the winding length). Reference: McLyman, *Transformer and
/// Inductor Design Handbook*, 4th ed. (2011), chapter 8 (fringing flux). Valid for gaps
/// shorter than the window height; F ≥ 1 is enforced at the limit.
pub fn fringing_factor(
    gap: Length,
    leg_area: crate::units::Area,
    window_height: Length,
) -> Result<f64> {
    let g = positive("gap", gap)?.value;
    let a = positive("leg_area", leg_area)?.value;
    let h = positive("window_height", window_height)?.value;
    if g >= h {
        return Err(Error::out_of_range(format!(
            "`gap` = {:.4} mm is not below the window height {:.4} mm; the fringing formula does not apply",
            g * 1e3,
            h * 1e3
        )));
    }
    Ok((1.0 + g / a.sqrt() * (2.0 * h / g).ln()).max(1.0))
}

fn window_height(core: &Core) -> f64 {
    core.window_height.value
}

/// Reluctance of the gap(s) for a gap `g` (per gap) and a placement, including fringing.
fn gap_reluctance(core: &Core, g: f64, placement: GapPlacement) -> Result<f64> {
    if g == 0.0 {
        return Ok(0.0);
    }
    if placement == GapPlacement::Spacer && core.family == super::cores::CoreFamily::Toroid {
        return Err(Error::invalid(
            "a toroid has no legs to put a spacer under; use `gap_placement` \"centre_leg\" for a cut ring",
        ));
    }
    let h = window_height(core);
    let ac = core.centre_leg_area.value;
    let fc = fringing_factor(si(g), si(ac), si(h))?;
    let mut r = g / (MU0 * ac * fc);
    if placement == GapPlacement::Spacer {
        // two outer legs, each its own pole face: the fringing factor belongs to one leg's
        // face (area Ao/2), and the two gaps act in parallel
        let ao = core.outer_leg_area.value;
        let fo = fringing_factor(si(g), si(ao / 2.0), si(h))?;
        r += g / (MU0 * ao * fo);
    }
    Ok(r)
}

/// Reluctance of the ungapped core, le/(µ0·µr·Ae).
fn core_reluctance(core: &Core, relative_permeability: f64) -> Result<f64> {
    let mu = positive_number("relative_permeability", relative_permeability)?;
    Ok(core.effective_length.value / (MU0 * mu * core.effective_area.value))
}

/// Inductance of N turns on a gapped core: L = N²/(R_core + R_gap), with
/// R_core = le/(µ0·µr·Ae) and R_gap = lg/(µ0·Ac·Fc) for the centre leg (plus
/// lg/(µ0·Ao·Fo) for the two outer legs with a spacer, Fo taken for one leg's face Ao/2,
/// the gaps of the two legs in parallel). F is McLyman's fringing factor
/// ([`fringing_factor`]). Assumes a linear core below saturation. Reference: McLyman,
/// *Transformer and Inductor Design Handbook*, 4th ed. (2011), chapter 8.
pub fn inductance_for_air_gap(
    core: &Core,
    turns: f64,
    gap: Length,
    placement: GapPlacement,
    relative_permeability: f64,
) -> Result<Inductance> {
    let n = positive_number("turns", turns)?;
    let g = non_negative("gap", gap)?.value;
    let r = core_reluctance(core, relative_permeability)? + gap_reluctance(core, g, placement)?;
    finite_result("inductance", si(n * n / r), "`turns` or `gap` are")
}

/// Solves R_gap(g) = needed by Brent's method to 1 pm (R_gap rises monotonically with g).
fn solve_gap(core: &Core, needed: f64, placement: GapPlacement) -> Result<f64> {
    if !(needed.is_finite() && needed > 0.0) {
        return Err(Error::infeasible(
            "the target needs no air gap: the core alone is below the wanted inductance (lower the turns or the target)",
        ));
    }
    let hi_limit = window_height(core) * 0.5;
    let at_limit = gap_reluctance(core, hi_limit, placement)?;
    if at_limit < needed {
        return Err(Error::infeasible(format!(
            "the wanted inductance needs a gap above {:.3} mm (half the window height); use more turns or a larger core",
            hi_limit * 1e3
        )));
    }
    let root = brent(
        "the air gap",
        |g| Ok(gap_reluctance(core, g, placement)? - needed),
        Sample::new(0.0, gap_reluctance(core, 0.0, placement)? - needed),
        Sample::new(hi_limit, at_limit - needed),
        Tolerance::absolute(1e-12),
        200,
    )?;
    Ok(root.x)
}

/// The gap for a wanted inductance, with everything a bench check needs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct GapResult {
    /// Gap per leg: ground depth of the centre leg, or spacer thickness.
    pub gap: Length,
    /// Total gap length the flux crosses (twice the spacer for a spacer under all legs).
    pub gap_in_path: Length,
    /// Inductance per turn squared, AL = L/N².
    pub inductance_factor: Inductance,
    /// Effective permeability µe = le/(µ0·Ae·N²/L).
    pub effective_permeability: f64,
    /// McLyman fringing factor at the centre leg.
    pub fringing_factor: f64,
    /// Inductance with this gap (equals the target to solver precision).
    pub inductance: Inductance,
}

crate::serialize_as_record!(GapResult);

impl Record for GapResult {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("gap", self.gap),
            Field::quantity("gap_in_path", self.gap_in_path),
            Field::quantity("inductance_factor", self.inductance_factor),
            Field::new("effective_permeability", self.effective_permeability),
            Field::new("fringing_factor", self.fringing_factor),
            Field::quantity("inductance", self.inductance),
        ]
    }
}

fn gap_result(
    core: &Core,
    n: f64,
    g: f64,
    placement: GapPlacement,
    r_core: f64,
) -> Result<GapResult> {
    let r = r_core + gap_reluctance(core, g, placement)?;
    let l = n * n / r;
    let f = if g > 0.0 {
        fringing_factor(si(g), core.centre_leg_area, si(window_height(core)))?
    } else {
        1.0
    };
    Ok(GapResult {
        gap: si(g),
        gap_in_path: si(if placement == GapPlacement::Spacer {
            2.0 * g
        } else {
            g
        }),
        inductance_factor: si(1.0 / r),
        effective_permeability: core.effective_length.value / (MU0 * core.effective_area.value * r),
        fringing_factor: f,
        inductance: si(l),
    })
}

/// The gap record of a given gap length with N turns (the inductance it gives, AL, µe,
/// fringing), as [`inductance_for_air_gap`].
pub(crate) fn gap_for_given_length(
    core: &Core,
    turns: f64,
    gap: Length,
    placement: GapPlacement,
    relative_permeability: f64,
) -> Result<GapResult> {
    let n = positive_number("turns", turns)?;
    let g = non_negative("gap", gap)?.value;
    if g > 0.5 * window_height(core) {
        return Err(Error::out_of_range(format!(
            "`gap` {:.3} mm is above half the window height ({:.3} mm)",
            g * 1e3,
            0.5 * window_height(core) * 1e3
        )));
    }
    let rc = core_reluctance(core, relative_permeability)?;
    gap_result(core, n, g, placement, rc)
}

/// The air gap for a target inductance with N turns: solves
/// N²/L = le/(µ0·µr·Ae) + R_gap(lg) for lg, where R_gap includes McLyman's fringing factor,
/// which itself depends on lg — so the solution is iterated (Brent's method to 1 pm).
/// Assumptions and reference as [`inductance_for_air_gap`]. An error when the core alone is
/// already below the target (no gap can raise inductance) or the gap would exceed half the
/// window height.
pub fn air_gap_for_inductance(
    core: &Core,
    turns: f64,
    inductance: Inductance,
    placement: GapPlacement,
    relative_permeability: f64,
) -> Result<GapResult> {
    let n = positive_number("turns", turns)?;
    let l = positive("inductance", inductance)?.value;
    let rc = core_reluctance(core, relative_permeability)?;
    let g = solve_gap(core, n * n / l - rc, placement)?;
    gap_result(core, n, g, placement, rc)
}

/// Bench workflow: the spacer (or ground gap) for a target inductance from a measured
/// ungapped inductance with the same winding.
///
/// The measurement fixes the core's real reluctance, residual mating gap included:
/// R0 = N²/L0. The gap must add R_gap = N²/L − N²/L0, solved as in
/// [`air_gap_for_inductance`]. The result's AL and µe are those of the gapped core.
/// Valid for L < L0. Reference: McLyman (2011), chapter 8 (gap and fringing); the bench
/// method is common practice, no published source.
pub fn spacer_for_target_inductance(
    core: &Core,
    turns: f64,
    measured_ungapped: Inductance,
    target: Inductance,
    placement: GapPlacement,
) -> Result<GapResult> {
    let n = positive_number("turns", turns)?;
    let l0 = positive("measured_ungapped_inductance", measured_ungapped)?.value;
    let l = positive("target_inductance", target)?.value;
    if l >= l0 {
        return Err(Error::infeasible(format!(
            "the target inductance ({:.4} mH) must be below the measured ungapped inductance ({:.4} mH): a gap only lowers inductance",
            l * 1e3,
            l0 * 1e3
        )));
    }
    let r0 = n * n / l0;
    let g = solve_gap(core, n * n / l - r0, placement)?;
    gap_result(core, n, g, placement, r0)
}

/// Bench workflow: the effective gap from a measured gapped inductance. The core's own
/// reluctance comes from a measured ungapped inductance when given (R0 = N²/L0), otherwise
/// from le/(µ0·µr·Ae) with the material's working permeability. Same method as
/// [`spacer_for_target_inductance`].
pub fn effective_gap_from_inductance(
    core: &Core,
    turns: f64,
    measured_gapped: Inductance,
    measured_ungapped: Option<Inductance>,
    placement: GapPlacement,
    relative_permeability: f64,
) -> Result<GapResult> {
    let n = positive_number("turns", turns)?;
    let l = positive("measured_gapped_inductance", measured_gapped)?.value;
    let r0 = match measured_ungapped {
        Some(l0) => n * n / positive("measured_ungapped_inductance", l0)?.value,
        None => core_reluctance(core, relative_permeability)?,
    };
    let g = solve_gap(core, n * n / l - r0, placement)?;
    gap_result(core, n, g, placement, r0)
}

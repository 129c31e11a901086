//! Core loss by the improved generalized Steinmetz equation (iGSE) for piecewise-linear
//! (flyback) and sampled flux waveforms, and the classic Steinmetz equation for sinusoids.

use super::material::SteinmetzBand;
use crate::error::{Error, Result};
use crate::units::validate::{finite_result, non_negative, positive};
use crate::units::{si, Frequency, MagneticFluxDensity, Time, VolumetricPowerDensity};
use std::f64::consts::PI;

/// One straight piece of a flux waveform: the flux changes by `change` over `duration`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FluxSegment {
    /// How long the piece lasts.
    pub duration: Time,
    /// Flux-density change over the piece (positive rising, negative falling, zero flat).
    pub change: MagneticFluxDensity,
}

/// ∫₀^{2π} |cos θ|^α dθ by composite Simpson's rule (4000 intervals; the integrand is
/// smooth enough for α ≥ 1 that the error is below 1e-9).
fn cos_power_integral(alpha: f64) -> f64 {
    // the integral depends on α alone and costs 4000 powers: keep the last few per thread
    // (the same numbers, computed once per material band instead of once per call)
    thread_local! {
        static KNOWN: std::cell::Cell<[(u64, f64); 4]> =
            const { std::cell::Cell::new([(u64::MAX, 0.0); 4]) };
    }
    let key = alpha.to_bits();
    let known = KNOWN.with(|k| k.get());
    if let Some((_, v)) = known.iter().find(|(k, _)| *k == key) {
        return *v;
    }
    let v = cos_power_integral_uncached(alpha);
    let mut next = known;
    next.rotate_right(1);
    next[0] = (key, v);
    KNOWN.with(|k| k.set(next));
    v
}

fn cos_power_integral_uncached(alpha: f64) -> f64 {
    let n = 4000;
    let h = 2.0 * PI / n as f64;
    let f = |t: f64| t.cos().abs().powf(alpha);
    let mut s = f(0.0) + f(2.0 * PI);
    for i in 1..n {
        let w = if i % 2 == 1 { 4.0 } else { 2.0 };
        s += w * f(i as f64 * h);
    }
    s * h / 3.0
}

/// The iGSE coefficient ki = k / ((2π)^(α−1)·∫₀^{2π}|cos θ|^α·2^(β−α) dθ)
/// (Venkatachalam, Sullivan, Abdallah, Tacca, COMPEL 2002, eq. for ki).
pub fn igse_coefficient(band: &SteinmetzBand) -> f64 {
    let (a, b) = (band.alpha, band.beta);
    band.k / ((2.0 * PI).powf(a - 1.0) * cos_power_integral(a) * 2f64.powf(b - a))
}

/// Classic Steinmetz loss density for a sinusoidal flux: Pv = k·f^α·B̂^β (B̂ the peak,
/// half the peak-to-peak swing). Valid inside the band's frequency range (checked by the
/// caller choosing the band). Reference: Venkatachalam et al. 2002, eq. (1).
pub fn steinmetz_loss_density(
    band: &SteinmetzBand,
    frequency: Frequency,
    flux_amplitude: MagneticFluxDensity,
) -> Result<VolumetricPowerDensity> {
    let f = positive("frequency", frequency)?.value;
    let b = non_negative("flux_amplitude", flux_amplitude)?.value;
    Ok(si(band.k * f.powf(band.alpha) * b.powf(band.beta)))
}

/// iGSE loss density of a piecewise-linear flux waveform over one period:
/// Pv = (1/T)·Σ ki·|ΔBj/tj|^α·(ΔB)^(β−α)·tj, with ΔB the peak-to-peak swing of the whole
/// waveform and T = Σ tj; flat pieces add nothing but time (the dead time of DCM).
/// Assumes a single major loop (no minor loops), as a flyback's flux has. The segments
/// must return the flux to its start (volt-second balance). Reference: Venkatachalam,
/// Sullivan, Abdallah, Tacca, "Accurate prediction of ferrite core loss with nonsinusoidal
/// waveforms using only Steinmetz parameters", IEEE COMPEL 2002, eq. (11) and the
/// piecewise-linear form eq. (13).
pub fn igse_loss_density(
    band: &SteinmetzBand,
    segments: &[FluxSegment],
) -> Result<VolumetricPowerDensity> {
    if segments.is_empty() {
        return Err(Error::invalid(
            "the flux waveform needs at least one segment",
        ));
    }
    let mut period = 0.0;
    let mut b = 0.0f64;
    let (mut bmin, mut bmax) = (0.0f64, 0.0f64);
    let mut scale = 0.0f64;
    for s in segments {
        period += non_negative("segment duration", s.duration)?.value;
        let db = crate::units::validate::finite("segment flux change", s.change)?.value;
        if db != 0.0 && s.duration.value == 0.0 {
            return Err(Error::invalid(
                "a segment with a flux change needs a positive duration (dB/dt would be infinite)",
            ));
        }
        b += db;
        bmin = bmin.min(b);
        bmax = bmax.max(b);
        scale = scale.max(db.abs());
    }
    if period <= 0.0 {
        return Err(Error::invalid(
            "the flux waveform's period must be positive",
        ));
    }
    if b.abs() > 1e-9 * scale.max(1e-12) {
        return Err(Error::invalid(format!(
            "the flux waveform does not return to its start (net change {:.4e} T): volt-second balance is violated",
            b
        )));
    }
    let swing = bmax - bmin;
    if swing == 0.0 {
        return Ok(si(0.0));
    }
    let ki = igse_coefficient(band);
    let a = band.alpha;
    let sum: f64 = segments
        .iter()
        .filter(|s| s.change.value != 0.0)
        .map(|s| (s.change.value / s.duration.value).abs().powf(a) * s.duration.value)
        .sum();
    finite_result(
        "iGSE loss density",
        si(ki * swing.powf(band.beta - a) * sum / period),
        "the flux swing or its rate of change are",
    )
}

/// iGSE loss density of a uniformly sampled flux waveform covering exactly one period
/// (the sample after the last equals the first): dB/dt by finite differences,
/// Pv = (1/T)·∫ ki·|dB/dt|^α·(ΔB)^(β−α) dt. Use for measured or simulated waveforms;
/// same reference as [`igse_loss_density`].
pub fn igse_loss_density_sampled(
    band: &SteinmetzBand,
    period: Time,
    flux_samples: &[f64],
) -> Result<VolumetricPowerDensity> {
    let t = positive("period", period)?.value;
    if flux_samples.len() < 4 {
        return Err(Error::invalid(
            "at least 4 flux samples per period are needed",
        ));
    }
    let n = flux_samples.len();
    let dt = t / n as f64;
    let segments: Vec<FluxSegment> = (0..n)
        .map(|i| FluxSegment {
            duration: si(dt),
            change: si(flux_samples[(i + 1) % n] - flux_samples[i]),
        })
        .collect();
    for x in flux_samples {
        if !x.is_finite() {
            return Err(Error::invalid("flux samples must be finite (T)"));
        }
    }
    igse_loss_density(band, &segments)
}

/// The flux waveform of a flyback transformer: rises by `swing` while the primary conducts
/// (`rise_time`), falls back while the secondaries conduct (`fall_time`), then stays flat
/// for the rest of the period (the DCM dead time). CCM: rise + fall = T.
pub fn flyback_flux_segments(
    swing: MagneticFluxDensity,
    rise_time: Time,
    fall_time: Time,
    period: Time,
) -> Result<Vec<FluxSegment>> {
    let db = non_negative("flux_swing", swing)?.value;
    let tr = positive("rise_time", rise_time)?.value;
    let tf = positive("fall_time", fall_time)?.value;
    let t = positive("period", period)?.value;
    if tr + tf > t * (1.0 + 1e-9) {
        return Err(Error::invalid(format!(
            "rise_time + fall_time ({:.4} µs) exceeds the period ({:.4} µs)",
            (tr + tf) * 1e6,
            t * 1e6
        )));
    }
    let mut v = vec![
        FluxSegment {
            duration: si(tr),
            change: si(db),
        },
        FluxSegment {
            duration: si(tf),
            change: si(-db),
        },
    ];
    let dead = (t - tr - tf).max(0.0);
    if dead > 0.0 {
        v.push(FluxSegment {
            duration: si(dead),
            change: si(0.0),
        });
    }
    Ok(v)
}

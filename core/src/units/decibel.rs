//! Decibel values, kept apart from linear ratios: dB (a ratio), dBµV and dBµA (levels).

use super::dimension::Dimension;
use super::format::format_number;
use super::quantity::Quantity;
use crate::error::{Error, Result};
use std::fmt;

/// What a decibel value is relative to.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DbReference {
    /// A pure ratio (gain, attenuation, margin): dB.
    Ratio,
    /// A voltage level relative to 1 µV: dBµV.
    MicroVolt,
    /// A current level relative to 1 µA: dBµA.
    MicroAmpere,
}

impl DbReference {
    /// The unit symbol.
    pub fn symbol(self) -> &'static str {
        match self {
            DbReference::Ratio => "dB",
            DbReference::MicroVolt => "dBµV",
            DbReference::MicroAmpere => "dBµA",
        }
    }
}

/// A value in decibels with its reference. Ratios and levels combine by the usual rules:
/// level ± ratio = level, level − level = ratio, ratio ± ratio = ratio.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Decibel {
    /// The number of decibels.
    pub value: f64,
    /// What it is relative to.
    pub reference: DbReference,
}

impl Decibel {
    /// A ratio in dB.
    pub const fn ratio(value: f64) -> Self {
        Self {
            value,
            reference: DbReference::Ratio,
        }
    }
    /// dB of an amplitude (voltage or current) ratio: 20·log10(x). `x` must be positive.
    pub fn from_amplitude_ratio(x: f64) -> Result<Self> {
        if !(x > 0.0 && x.is_finite()) {
            return Err(Error::invalid(format!(
                "an amplitude ratio must be positive and finite to be written in dB, got {}",
                format_number(x)
            )));
        }
        Ok(Self::ratio(20.0 * x.log10()))
    }
    /// dB of a power ratio: 10·log10(x). `x` must be positive.
    pub fn from_power_ratio(x: f64) -> Result<Self> {
        if !(x > 0.0 && x.is_finite()) {
            return Err(Error::invalid(format!(
                "a power ratio must be positive and finite to be written in dB, got {}",
                format_number(x)
            )));
        }
        Ok(Self::ratio(10.0 * x.log10()))
    }
    /// The amplitude ratio of a dB value: 10^(dB/20).
    pub fn amplitude_ratio(&self) -> f64 {
        10f64.powf(self.value / 20.0)
    }
    /// A voltage or current as a level in dBµV or dBµA: 20·log10(|x| / 1 µ).
    pub fn level_of(q: &Quantity) -> Result<Self> {
        let reference = match q.dimension() {
            d if d == Dimension::VOLTAGE => DbReference::MicroVolt,
            d if d == Dimension::CURRENT => DbReference::MicroAmpere,
            _ => {
                return Err(Error::dimension(format!(
                    "only a voltage (dBµV) or a current (dBµA) has a decibel level, got {}",
                    q.describe()
                )))
            }
        };
        let a = q.value().abs();
        if !(a > 0.0 && a.is_finite()) {
            return Err(Error::invalid(format!(
                "a level in decibels needs a non-zero finite value, got {q}"
            )));
        }
        Ok(Self {
            value: 20.0 * (a / 1e-6).log10(),
            reference,
        })
    }
    /// The voltage or current of a level; a ratio has none.
    pub fn to_quantity(&self) -> Result<Quantity> {
        let dimension = match self.reference {
            DbReference::MicroVolt => Dimension::VOLTAGE,
            DbReference::MicroAmpere => Dimension::CURRENT,
            DbReference::Ratio => {
                return Err(Error::dimension(format!(
                    "{self} is a ratio, not a level; it has no voltage or current"
                )))
            }
        };
        Ok(Quantity::new(1e-6 * self.amplitude_ratio(), dimension))
    }
    /// Sum: ratio + ratio, level + ratio.
    pub fn add(&self, other: &Decibel) -> Result<Decibel> {
        use DbReference::Ratio;
        match (self.reference, other.reference) {
            (a, Ratio) => Ok(Decibel {
                value: self.value + other.value,
                reference: a,
            }),
            (Ratio, b) => Ok(Decibel {
                value: self.value + other.value,
                reference: b,
            }),
            _ => Err(Error::dimension(format!(
                "cannot add two levels ({self} and {other}); add a ratio in dB to a level"
            ))),
        }
    }
    /// Difference: level − level = ratio, level − ratio = level, ratio − ratio = ratio.
    pub fn sub(&self, other: &Decibel) -> Result<Decibel> {
        use DbReference::Ratio;
        match (self.reference, other.reference) {
            (a, Ratio) => Ok(Decibel {
                value: self.value - other.value,
                reference: a,
            }),
            (a, b) if a == b => Ok(Decibel::ratio(self.value - other.value)),
            _ => Err(Error::dimension(format!(
                "cannot subtract {other} from {self}"
            ))),
        }
    }
    /// Compares two values of the same reference.
    pub fn compare(&self, other: &Decibel) -> Result<std::cmp::Ordering> {
        if self.reference != other.reference {
            return Err(Error::dimension(format!(
                "cannot compare {self} and {other}: different references"
            )));
        }
        self.value
            .partial_cmp(&other.value)
            .ok_or_else(|| Error::invalid("cannot compare NaN decibel values"))
    }
}

impl fmt::Display for Decibel {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        // decibels read best with one decimal
        let v = (self.value * 10.0).round() / 10.0;
        write!(f, "{} {}", format_number(v), self.reference.symbol())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn levels_and_ratios() {
        // 1 mV = 60 dBµV by definition of the decibel (20·log10(1e-3/1e-6))
        let l = Decibel::level_of(&Quantity::new(1e-3, Dimension::VOLTAGE)).unwrap();
        assert!((l.value - 60.0).abs() < 1e-12);
        assert_eq!(l.to_string(), "60 dBµV");
        let m = l
            .sub(&Decibel {
                value: 56.0,
                reference: DbReference::MicroVolt,
            })
            .unwrap();
        assert_eq!(m.reference, DbReference::Ratio);
        assert!(l.add(&l).is_err());
        assert!(Decibel::from_amplitude_ratio(-1.0).is_err());
    }
}

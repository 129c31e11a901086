//! The runtime quantity: a value in coherent SI with its dimension, checked at run time.

use super::dimension::Dimension;
use super::format::format_quantity;
use crate::error::{Error, Result};
use std::cmp::Ordering;
use std::fmt;

/// Offset between the Kelvin and Celsius scales, exactly (SI brochure, 9th ed.).
pub const CELSIUS_OFFSET: f64 = 273.15;

/// A value in coherent SI units together with its dimension.
///
/// This is the type scripts compute with; native code uses `uom` quantities and converts
/// at the boundary with [`Quantity::from_typed`] and [`Quantity::to_typed`]. An absolute
/// temperature carries a flag so that it prints in °C and follows the affine rules
/// (absolute − absolute = difference; absolute + absolute is an error).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Quantity {
    value: f64,
    dimension: Dimension,
    absolute_temperature: bool,
}

impl Quantity {
    /// A quantity from a value in coherent SI units and a dimension.
    pub const fn new(value: f64, dimension: Dimension) -> Self {
        Self {
            value,
            dimension,
            absolute_temperature: false,
        }
    }
    /// A plain number.
    pub const fn number(value: f64) -> Self {
        Self::new(value, Dimension::NONE)
    }
    /// An absolute (thermodynamic) temperature from a value in kelvin.
    pub const fn kelvin_absolute(kelvin: f64) -> Self {
        Self {
            value: kelvin,
            dimension: Dimension::TEMPERATURE,
            absolute_temperature: true,
        }
    }
    /// An absolute temperature from degrees Celsius: T = t + 273.15 K.
    pub fn celsius(degrees: f64) -> Self {
        Self::kelvin_absolute(degrees + CELSIUS_OFFSET)
    }
    /// The value in coherent SI units (kelvin for temperatures).
    pub const fn value(&self) -> f64 {
        self.value
    }
    /// The dimension.
    pub const fn dimension(&self) -> Dimension {
        self.dimension
    }
    /// True for an absolute temperature (printed in °C).
    pub const fn is_absolute_temperature(&self) -> bool {
        self.absolute_temperature
    }
    /// True when the value is a plain number.
    pub fn is_dimensionless(&self) -> bool {
        self.dimension.is_dimensionless()
    }
    /// The same value with the absolute-temperature flag set or cleared.
    #[must_use]
    pub fn with_absolute_temperature(mut self, absolute: bool) -> Self {
        self.absolute_temperature = absolute && self.dimension == Dimension::TEMPERATURE;
        self
    }

    /// A description for messages: the formatted value and what it measures, e.g.
    /// `1 mH (inductance)`.
    pub fn describe(&self) -> String {
        format!("{self} ({})", self.kind_name())
    }

    fn kind_name(&self) -> String {
        if self.absolute_temperature {
            "absolute temperature".into()
        } else {
            self.dimension.to_string()
        }
    }

    fn same_dimension(&self, other: &Quantity, verb: &str) -> Result<()> {
        if self.dimension == other.dimension {
            Ok(())
        } else {
            Err(Error::dimension(format!(
                "cannot {verb} {} and {}: their dimensions differ",
                self.describe(),
                other.describe()
            )))
        }
    }

    /// Sum; the dimensions must agree. Absolute temperature + difference is absolute.
    pub fn add(&self, other: &Quantity) -> Result<Quantity> {
        self.same_dimension(other, "add")?;
        if self.absolute_temperature && other.absolute_temperature {
            return Err(Error::dimension(format!(
                "cannot add two absolute temperatures ({self} and {other}); add a difference in K"
            )));
        }
        Ok(Quantity {
            value: self.value + other.value,
            dimension: self.dimension,
            absolute_temperature: self.absolute_temperature || other.absolute_temperature,
        })
    }

    /// Difference; the dimensions must agree. Absolute − absolute is a difference in K.
    pub fn sub(&self, other: &Quantity) -> Result<Quantity> {
        self.same_dimension(other, "subtract")?;
        if !self.absolute_temperature && other.absolute_temperature {
            return Err(Error::dimension(format!(
                "cannot subtract an absolute temperature ({other}) from a temperature difference ({self})"
            )));
        }
        Ok(Quantity {
            value: self.value - other.value,
            dimension: self.dimension,
            absolute_temperature: self.absolute_temperature && !other.absolute_temperature,
        })
    }

    /// Product; dimensions multiply.
    pub fn mul(&self, other: &Quantity) -> Quantity {
        Quantity::new(self.value * other.value, self.dimension * other.dimension)
    }

    /// Quotient; dimensions divide.
    pub fn div(&self, other: &Quantity) -> Quantity {
        Quantity::new(self.value / other.value, self.dimension / other.dimension)
    }

    /// Multiplies by a plain number, keeping the absolute-temperature flag off.
    pub fn scale(&self, factor: f64) -> Quantity {
        Quantity::new(self.value * factor, self.dimension)
    }

    /// Integer power; exponents multiply.
    pub fn powi(&self, n: i32) -> Quantity {
        Quantity::new(self.value.powi(n), self.dimension.powi(n))
    }

    /// Square root; every exponent of the dimension must be even and the value not negative.
    pub fn sqrt(&self) -> Result<Quantity> {
        let dimension = self.dimension.sqrt().ok_or_else(|| {
            Error::dimension(format!(
                "cannot take the square root of {}: {} is not the square of a unit (a base unit has an odd exponent)",
                self.describe(),
                self.dimension.derived_units()
            ))
        })?;
        if self.value < 0.0 {
            return Err(Error::invalid(format!(
                "cannot take the square root of a negative value, {self}"
            )));
        }
        Ok(Quantity::new(self.value.sqrt(), dimension))
    }

    /// Absolute value (magnitude); keeps the dimension.
    pub fn abs(&self) -> Quantity {
        Quantity {
            value: self.value.abs(),
            ..*self
        }
    }

    /// Negation.
    pub fn neg(&self) -> Quantity {
        Quantity::new(-self.value, self.dimension)
    }

    /// Compares two quantities of the same dimension.
    pub fn compare(&self, other: &Quantity) -> Result<Ordering> {
        self.same_dimension(other, "compare")?;
        self.value.partial_cmp(&other.value).ok_or_else(|| {
            Error::invalid(format!("cannot compare {self} and {other}: not a number"))
        })
    }

    /// The smaller of two quantities of the same dimension.
    pub fn min(&self, other: &Quantity) -> Result<Quantity> {
        Ok(match self.compare(other)? {
            Ordering::Greater => *other,
            _ => *self,
        })
    }

    /// The larger of two quantities of the same dimension.
    pub fn max(&self, other: &Quantity) -> Result<Quantity> {
        Ok(match self.compare(other)? {
            Ordering::Less => *other,
            _ => *self,
        })
    }

    /// The value expressed in a unit given as text (`"nF"`, `"V/us"`, `"°C"`).
    pub fn value_in(&self, unit: &str) -> Result<f64> {
        let u = super::parse::parse_unit(unit)?;
        if u.dimension != self.dimension {
            return Err(Error::dimension(format!(
                "cannot express {} in '{unit}', which is a unit of {}",
                self.describe(),
                u.dimension
            )));
        }
        if u.celsius {
            return Ok(self.value - CELSIUS_OFFSET);
        }
        Ok(self.value / u.scale)
    }

    /// The value written in a chosen unit, e.g. `4700 nF` for `(4.7 µF).to("nF")`.
    pub fn to_unit_string(&self, unit: &str) -> Result<String> {
        let v = self.value_in(unit)?;
        Ok(format!(
            "{} {}",
            super::format::format_number(v),
            unit.trim()
        ))
    }

    /// Converts a `uom` quantity into a runtime quantity.
    pub fn from_typed<Q: super::typed::TypedQuantity>(q: Q) -> Quantity {
        let mut r = Quantity::new(q.si_value(), Q::dimension());
        r.absolute_temperature = Q::is_absolute_temperature();
        r
    }

    /// Converts into a `uom` quantity, checking the dimension; `parameter` names the value
    /// in the error message.
    pub fn to_typed<Q: super::typed::TypedQuantity>(&self, parameter: &str) -> Result<Q> {
        if self.dimension != Q::dimension() {
            return Err(Error::dimension(format!(
                "`{parameter}` must be a {} ({}), got {}",
                Q::dimension(),
                super::format::unit_symbol(Q::dimension()),
                self.describe()
            )));
        }
        Ok(Q::from_si(self.value))
    }
}

impl fmt::Display for Quantity {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&format_quantity(
            self.value,
            self.dimension,
            self.absolute_temperature,
        ))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn algebra_and_errors() {
        let v = Quantity::new(12.0, Dimension::VOLTAGE);
        let i = Quantity::new(1.5, Dimension::CURRENT);
        assert_eq!(v.mul(&i).to_string(), "18 W");
        let l = Quantity::new(1e-3, Dimension::INDUCTANCE);
        let e = l.add(&Quantity::new(1.0, Dimension::CURRENT)).unwrap_err();
        assert_eq!(
            e.message(),
            "cannot add 1 mH (inductance) and 1 A (current): their dimensions differ"
        );
    }

    #[test]
    fn temperatures() {
        let t1 = Quantity::celsius(100.0);
        let t0 = Quantity::celsius(25.0);
        let d = t1.sub(&t0).unwrap();
        assert!(!d.is_absolute_temperature());
        assert_eq!(d.to_string(), "75 K");
        assert_eq!(t0.add(&d).unwrap().to_string(), "100 °C");
        assert!(t0.add(&t1).is_err());
        assert!(d.sub(&t0).is_err());
    }
}

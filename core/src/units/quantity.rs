//! The runtime quantity: a value in coherent SI with its dimension, checked at run time.

use super::dimension::Dimension;
use super::format::format_quantity;
use crate::error::{Error, Result};
use std::cmp::Ordering;
use std::fmt;

/// Offset between the Kelvin and Celsius scales, exactly (SI brochure, 9th ed.).
pub const CELSIUS_OFFSET: f64 = 273.15;

/// Relative tolerance of `==` between quantities in scripts: two values are equal when
/// |a − b| ≤ 1e-9 · max(|a|, |b|). One part in a billion is far below any tolerance of a
/// component or a measurement, and far above the rounding of a few unit conversions
/// (`22 µF` and `22000 nF` differ in the last bit). `exactly_equal` compares exactly.
pub const COMPARISON_TOLERANCE: f64 = 1e-9;

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
    /// An absolute temperature from degrees Celsius, refusing values below absolute zero
    /// (−273.15 °C) and non-finite input.
    pub fn celsius_checked(degrees: f64) -> Result<Self> {
        if !degrees.is_finite() || degrees < -CELSIUS_OFFSET {
            return Err(Error::out_of_range(format!(
                "`degrees` must be a finite temperature at or above absolute zero (−273.15 °C), got {} °C",
                super::format::format_number(degrees)
            )));
        }
        Ok(Self::celsius(degrees))
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

    /// Equality within [`COMPARISON_TOLERANCE`] (relative); the dimensions must agree.
    /// Formula: |a − b| ≤ 1e-9 · max(|a|, |b|); NaN is never equal.
    pub fn approx_eq(&self, other: &Quantity) -> Result<bool> {
        self.compare_tolerant(other).map(Ordering::is_eq)
    }

    /// Ordering that treats values within [`COMPARISON_TOLERANCE`] as equal, so that `<=`
    /// and `>=` agree with `==`; the dimensions must agree.
    pub fn compare_tolerant(&self, other: &Quantity) -> Result<Ordering> {
        let exact = self.compare(other)?;
        let scale = self.value.abs().max(other.value.abs());
        if (self.value - other.value).abs() <= COMPARISON_TOLERANCE * scale {
            Ok(Ordering::Equal)
        } else {
            Ok(exact)
        }
    }

    /// Exact equality of value, dimension and temperature kind (bit for bit on the value).
    pub fn exactly_equal(&self, other: &Quantity) -> bool {
        self.value == other.value
            && self.dimension == other.dimension
            && self.absolute_temperature == other.absolute_temperature
    }

    /// Product for scripts: an absolute temperature cannot be scaled or multiplied (its zero
    /// is at −273.15 °C; `celsius(25) * 2` is meaningless), so that is an error.
    pub fn checked_mul(&self, other: &Quantity) -> Result<Quantity> {
        self.refuse_absolute_in("multiply", other)?;
        Ok(self.mul(other))
    }

    /// Quotient for scripts: an absolute temperature cannot be divided (see
    /// [`Quantity::checked_mul`]); division by zero is an error.
    pub fn checked_div(&self, other: &Quantity) -> Result<Quantity> {
        self.refuse_absolute_in("divide", other)?;
        if other.value == 0.0 {
            return Err(Error::invalid(format!(
                "division by zero: {self} / {other}"
            )));
        }
        Ok(self.div(other))
    }

    fn refuse_absolute_in(&self, verb: &str, other: &Quantity) -> Result<()> {
        for t in [self, other] {
            if t.absolute_temperature {
                return Err(Error::dimension(format!(
                    "cannot {verb} the absolute temperature {t}: scale a temperature difference \
                     instead (e.g. `(celsius(100) - celsius(25)) * 2`, or write `40 * K` for a rise)"
                )));
            }
        }
        Ok(())
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
        if self.dimension == Dimension::TEMPERATURE
            && Q::is_absolute_temperature() != self.absolute_temperature
        {
            return Err(Error::dimension(if Q::is_absolute_temperature() {
                format!(
                    "`{parameter}` must be an absolute temperature (°C), got the temperature difference {self}; write `celsius({})` or \"{} °C\" for a temperature on the Celsius scale",
                    super::format::format_number(self.value),
                    super::format::format_number(self.value)
                )
            } else {
                format!(
                    "`{parameter}` must be a temperature difference (K), got the absolute temperature {self}; write `{} * K` for a rise of {} K",
                    super::format::format_number(self.value - CELSIUS_OFFSET),
                    super::format::format_number(self.value - CELSIUS_OFFSET)
                )
            }));
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

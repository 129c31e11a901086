//! The bridge between `uom` quantities (native API) and the runtime [`Quantity`](super::Quantity).

use super::dimension::Dimension;
use std::any::TypeId;
use uom::typenum::Integer;

/// A `uom` SI quantity with `f64` storage, seen through its dimension.
///
/// Implemented for every `uom::si::f64` quantity type; the dimension is read from the
/// type-level exponents, so no list of types needs to be kept in step.
pub trait TypedQuantity: Sized + Copy {
    /// The dimension of the type.
    fn dimension() -> Dimension;
    /// True for thermodynamic (absolute) temperature, which prints in °C.
    fn is_absolute_temperature() -> bool;
    /// The value in coherent SI units.
    fn si_value(&self) -> f64;
    /// Builds the quantity from a value in coherent SI units.
    fn from_si(value: f64) -> Self;
}

impl<D> TypedQuantity for uom::si::Quantity<D, uom::si::SI<f64>, f64>
where
    D: uom::si::Dimension + ?Sized,
    D::Kind: 'static,
{
    fn dimension() -> Dimension {
        Dimension {
            exponents: [
                D::L::to_i32() as i8,
                D::M::to_i32() as i8,
                D::T::to_i32() as i8,
                D::I::to_i32() as i8,
                D::Th::to_i32() as i8,
                D::N::to_i32() as i8,
                D::J::to_i32() as i8,
                // uom keeps angles dimensionless with a kind of their own
                i8::from(TypeId::of::<D::Kind>() == TypeId::of::<dyn uom::si::marker::AngleKind>()),
            ],
        }
    }
    fn is_absolute_temperature() -> bool {
        TypeId::of::<D::Kind>() == TypeId::of::<dyn uom::si::marker::TemperatureKind>()
    }
    fn si_value(&self) -> f64 {
        self.value
    }
    fn from_si(value: f64) -> Self {
        uom::si::Quantity {
            dimension: std::marker::PhantomData,
            units: std::marker::PhantomData,
            value,
        }
    }
}

/// Builds a `uom` quantity from a value in coherent SI units: `si::<Inductance>(1e-3)`.
pub fn si<Q: TypedQuantity>(value: f64) -> Q {
    Q::from_si(value)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::Quantity;
    use uom::si::f64::*;

    #[test]
    fn dimensions_from_types() {
        assert_eq!(
            <ElectricPotential as TypedQuantity>::dimension(),
            Dimension::VOLTAGE
        );
        assert_eq!(
            <Inductance as TypedQuantity>::dimension(),
            Dimension::INDUCTANCE
        );
        assert_eq!(
            <MagneticFluxDensity as TypedQuantity>::dimension(),
            Dimension::FLUX_DENSITY
        );
        assert!(<ThermodynamicTemperature as TypedQuantity>::is_absolute_temperature());
        assert!(!<TemperatureInterval as TypedQuantity>::is_absolute_temperature());
        let t = ThermodynamicTemperature::new::<uom::si::thermodynamic_temperature::degree_celsius>(
            25.0,
        );
        assert_eq!(Quantity::from_typed(t).to_string(), "25 °C");
        let q = Quantity::new(2.0, Dimension::VOLTAGE);
        assert!(q.to_typed::<Inductance>("primary_inductance").is_err());
        let v: ElectricPotential = q.to_typed("v").unwrap();
        assert_eq!(v.get::<uom::si::electric_potential::volt>(), 2.0);
    }
}

//! Rectified mains and the bulk capacitor: peak and valley voltage by energy balance with a
//! conduction time, the low-frequency ripple current, hold-up time and capacitor sizing.

mod bulk;

pub(crate) use bulk::bulk_capacitor_near;
pub use bulk::{
    bulk_capacitance_for_valley, bulk_capacitor, hold_up_time, BulkCapacitor, BulkCapacitorSpec,
};

//! Ferrite core shapes: the built-in sizes by their dimensions, effective parameters by the
//! IEC 60205 summation method, window, bobbin, mean turn length and surface area.

use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::validate::positive;
use crate::units::{si, Area, Length, Quantity, Volume};
use std::f64::consts::PI;

/// A core family (IEC 62317 shape families, plus toroids).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CoreFamily {
    /// E cores with a rectangular centre leg.
    E,
    /// EF cores (the flat-backed E variant of IEC 62317-8).
    Ef,
    /// EFD cores: low-profile E cores with a flat, wide centre leg.
    Efd,
    /// ETD cores: E cores with a round centre leg.
    Etd,
    /// EQ cores: round centre leg, short wide body.
    Eq,
    /// RM cores: square outline, round centre leg, outer legs at the corners.
    Rm,
    /// PQ cores: round centre leg, shaped outer legs.
    Pq,
    /// Ring cores of rectangular cross-section.
    Toroid,
    /// A core given by its effective parameters only.
    Custom,
}

impl CoreFamily {
    /// The family name as written in size names.
    pub fn as_str(self) -> &'static str {
        match self {
            CoreFamily::E => "E",
            CoreFamily::Ef => "EF",
            CoreFamily::Efd => "EFD",
            CoreFamily::Etd => "ETD",
            CoreFamily::Eq => "EQ",
            CoreFamily::Rm => "RM",
            CoreFamily::Pq => "PQ",
            CoreFamily::Toroid => "toroid",
            CoreFamily::Custom => "custom",
        }
    }
}

/// Dimensions of a pair of E-type halves (E, EF, EFD, ETD, EQ, RM, PQ), all for the mated pair.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PairedCoreDimensions {
    /// Overall width across the outer legs.
    pub overall_width: Length,
    /// Overall height of the mated pair.
    pub overall_height: Length,
    /// Depth of the yoke (the dimension along the winding axis' normal, into the page).
    pub depth: Length,
    /// Height of the winding window of the mated pair.
    pub window_height: Length,
    /// Width between the inner faces of the outer legs.
    pub window_width: Length,
    /// Centre-leg width (rectangular) or diameter (round).
    pub centre_leg_width: Length,
    /// Centre-leg depth for rectangular legs (equal to `depth` for plain E cores); ignored
    /// for round legs.
    pub centre_leg_depth: Length,
    /// True for a round centre leg.
    pub round_centre_leg: bool,
    /// Total cross-section of the outer legs when they are not plain rectangles (RM, PQ,
    /// EQ, ETD); `None` takes 2·(width − window width)/2·depth.
    pub outer_leg_area: Option<Area>,
}

/// Dimensions of a toroid with rectangular cross-section.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ToroidDimensions {
    /// Outer diameter.
    pub outer_diameter: Length,
    /// Inner diameter.
    pub inner_diameter: Length,
    /// Height.
    pub height: Length,
}

/// A core with everything a transformer design needs.
#[derive(Clone, Debug, PartialEq)]
pub struct Core {
    /// Size name (`ETD29`, `E25/13/7`, or a user's name).
    pub name: String,
    /// Shape family.
    pub family: CoreFamily,
    /// Effective magnetic cross-section Ae (IEC 60205: C1/C2).
    pub effective_area: Area,
    /// Effective magnetic path length le (IEC 60205: C1²/C2).
    pub effective_length: Length,
    /// Effective volume Ve = Ae·le.
    pub effective_volume: Volume,
    /// Smallest cross-section along the path, Amin (sets saturation).
    pub minimum_area: Area,
    /// Cross-section of the centre leg (where a ground gap sits).
    pub centre_leg_area: Area,
    /// Total cross-section of the outer legs (a spacer gap also sits there).
    pub outer_leg_area: Area,
    /// Winding window area of the core (without bobbin).
    pub window_area: Area,
    /// Window height along the centre leg (the length G of McLyman's fringing factor).
    pub window_height: Length,
    /// Winding width on the bobbin (between flanges), along the centre leg.
    pub winding_width: Length,
    /// Winding height available on the bobbin (from the tube to the window edge).
    pub winding_height: Length,
    /// Mean length of one turn at half the winding height.
    pub mean_turn_length: Length,
    /// Outer surface of the wound transformer (for temperature rise).
    pub surface_area: Area,
    /// Where Ae, le, Ve and Amin come from: the IEC 60205 summation over the dimensions, or,
    /// for the built-in standard sizes that have them, makers' handbook values.
    pub effective_parameters_from: String,
}

struct Segment {
    length: f64,
    area: f64,
}

/// Core constants of IEC 60205: C1 = Σ l/A and C2 = Σ l/A²; le = C1²/C2, Ae = C1/C2.
fn effective_from_segments(segments: &[Segment]) -> (f64, f64, f64) {
    let c1: f64 = segments.iter().map(|s| s.length / s.area).sum();
    let c2: f64 = segments.iter().map(|s| s.length / (s.area * s.area)).sum();
    let amin = segments
        .iter()
        .map(|s| s.area)
        .fold(f64::INFINITY, f64::min);
    (c1 / c2, c1 * c1 / c2, amin)
}

/// Bobbin allowance for a window of the given height and width: flange walls and tube wall
/// thickness, common practice, no published source (0.5 mm plus 4 % of the window height
/// per flange; 0.4 mm plus 5 % of the window half-width for the tube and clearance).
fn bobbin(window_height: f64, half_window_width: f64) -> (f64, f64) {
    let flange = 0.5e-3 + 0.04 * window_height;
    let tube = 0.4e-3 + 0.05 * half_window_width;
    (
        (window_height - 2.0 * flange).max(0.0),
        (half_window_width - tube).max(0.0),
    )
}

impl Core {
    /// A pair of E-type halves from its dimensions.
    ///
    /// Effective parameters by the IEC 60205 summation method for E-type pairs. The mean
    /// flux path has five segments: centre leg (l1 = window height, A1 = centre-leg area),
    /// yokes (l2 = window width − centre-leg width, A2 = 2·h·depth for yoke thickness h),
    /// outer legs (l3 = window height, A3 = their total area), the corners at the outer legs
    /// (l4 = π/4·(s + h), A4 = (A2 + A3)/2) and at the centre leg (l5 = π/4·(p + h),
    /// A5 = (A1 + A2)/2), where s is one outer leg's width (for given outer-leg areas: their
    /// area over twice the depth) and p half the centre-leg width across the core (the radius
    /// of a round leg). Each corner term
    /// covers the top and bottom quarter-ellipse arcs through the middle of the joined parts.
    /// Then C1 = Σ l/A, C2 = Σ l/A², le = C1²/C2, Ae = C1/C2, Ve = Ae·le, Amin = smallest
    /// segment area.
    ///
    /// Valid for E, EF, EFD and ETD pairs; RM, PQ and EQ are treated as E-type pairs with
    /// their outer-leg area given, which ignores the standard's separate terms for their
    /// shaped legs (le within about 6 %, Ae up to about 12 % high there). Against makers'
    /// handbook values with our built-in dimensions: ETD and EFD Ae within 2 %, le within
    /// 3.5 %; plain E and EF
    /// Ae up to about 10 % high, which the dimensions themselves cause (on E16/8/5 every
    /// segment is at least 22 mm², so no corner model can give the handbook 20.1 mm²).
    /// Bobbin winding width and height use a common-practice wall allowance. Reference:
    /// IEC 60205 (calculation of the effective parameters of magnetic piece parts).
    pub fn paired(name: &str, family: CoreFamily, d: &PairedCoreDimensions) -> Result<Core> {
        let a = core_dimension("overall_width", d.overall_width)?.value;
        let hh = core_dimension("overall_height", d.overall_height)?.value;
        let c = core_dimension("depth", d.depth)?.value;
        let wh = core_dimension("window_height", d.window_height)?.value;
        let ww = core_dimension("window_width", d.window_width)?.value;
        let f = core_dimension("centre_leg_width", d.centre_leg_width)?.value;
        let g = if d.round_centre_leg {
            f
        } else {
            core_dimension("centre_leg_depth", d.centre_leg_depth)?.value
        };
        if wh >= hh || ww >= a || f >= ww {
            return Err(Error::invalid(format!(
                "core `{name}`: the window must fit inside the core (window_height {:.3} mm < overall_height {:.3} mm, centre_leg_width {:.3} mm < window_width {:.3} mm < overall_width {:.3} mm)",
                wh * 1e3, hh * 1e3, f * 1e3, ww * 1e3, a * 1e3
            )));
        }
        let h = (hh - wh) / 2.0; // yoke thickness of one half
        let ac = if d.round_centre_leg {
            PI * f * f / 4.0
        } else {
            f * g
        };
        let ao = match d.outer_leg_area {
            Some(x) => {
                let x = positive("outer_leg_area", x)?.value;
                if x > a * c {
                    return Err(Error::out_of_range(format!(
                        "core `{name}`: `outer_leg_area` = {x:e} m² is more than overall_width × depth ({:e} m²), which no pair of halves can have",
                        a * c
                    )));
                }
                x
            }
            None => (a - ww) * c,
        };
        let ay = 2.0 * h * c;
        // p of the standard: half the centre leg's own width across the core (its radius
        // for a round leg), not an area-equivalent width at full depth, which shortened the
        // corner path of flat (EFD) and round legs
        let wc = f / 2.0;
        let wo = ao / (2.0 * c);
        let segs = [
            Segment {
                length: wh,
                area: ac,
            },
            Segment {
                length: ww - f,
                area: ay,
            },
            Segment {
                length: wh,
                area: ao,
            },
            Segment {
                length: PI / 4.0 * (wc + h),
                area: (ac + ay) / 2.0,
            },
            Segment {
                length: PI / 4.0 * (wo + h),
                area: (ao + ay) / 2.0,
            },
        ];
        let (ae, le, amin) = effective_from_segments(&segs);
        let half_ww = (ww - f) / 2.0;
        let (bw, bh) = bobbin(wh, half_ww);
        let tube = half_ww - bh;
        let mlt = if d.round_centre_leg {
            PI * (f + 2.0 * tube + bh)
        } else {
            2.0 * (f + g) + PI * (2.0 * tube + bh)
        };
        let depth_wound = c.max(g + 2.0 * half_ww);
        let surface = 2.0 * (a * hh + a * depth_wound + hh * depth_wound);
        finite_core(Core {
            name: name.to_string(),
            family,
            effective_area: si(ae),
            effective_length: si(le),
            effective_volume: si(ae * le),
            minimum_area: si(amin),
            centre_leg_area: si(ac),
            outer_leg_area: si(ao),
            window_area: si(wh * half_ww),
            window_height: si(wh),
            winding_width: si(bw),
            winding_height: si(bh),
            mean_turn_length: si(mlt),
            surface_area: si(surface),
            effective_parameters_from: FROM_DIMENSIONS.to_string(),
        })
    }

    /// A toroid of rectangular cross-section from its dimensions.
    ///
    /// IEC 60205 closed form for a ring: C1 = 2π/(h·ln(r2/r1)),
    /// C2 = 2π·(1/r1 − 1/r2)/(h²·ln³(r2/r1)), le = C1²/C2, Ae = C1/C2; Amin = h·(r2 − r1).
    /// Window = π·r1²; winding width = inner circumference; winding height r1/2 (common
    /// practice, no published source, leaves a hole for the shuttle). Reference: IEC 60205.
    pub fn toroid(name: &str, d: &ToroidDimensions) -> Result<Core> {
        let r2 = core_dimension("outer_diameter", d.outer_diameter)?.value / 2.0;
        let r1 = core_dimension("inner_diameter", d.inner_diameter)?.value / 2.0;
        let h = core_dimension("height", d.height)?.value;
        if r1 >= r2 {
            return Err(Error::invalid(format!(
                "toroid `{name}`: inner_diameter ({:.3} mm) must be below outer_diameter ({:.3} mm)",
                2e3 * r1,
                2e3 * r2
            )));
        }
        let ln = (r2 / r1).ln();
        let c1 = 2.0 * PI / (h * ln);
        let c2 = 2.0 * PI * (1.0 / r1 - 1.0 / r2) / (h * h * ln.powi(3));
        let ae = c1 / c2;
        let le = c1 * c1 / c2;
        let bh = r1 / 2.0;
        let mlt = 2.0 * h + 2.0 * (r2 - r1) + PI * bh;
        let od = 2.0 * r2 + 2.0 * bh;
        let hw = h + 2.0 * bh;
        let surface = 2.0 * PI * od * od / 4.0 + PI * od * hw;
        finite_core(Core {
            name: name.to_string(),
            family: CoreFamily::Toroid,
            effective_area: si(ae),
            effective_length: si(le),
            effective_volume: si(ae * le),
            minimum_area: si(h * (r2 - r1)),
            centre_leg_area: si(ae),
            outer_leg_area: si(ae),
            window_area: si(PI * r1 * r1),
            window_height: si(h),
            winding_width: si(2.0 * PI * r1),
            winding_height: si(bh),
            mean_turn_length: si(mlt),
            surface_area: si(surface),
            effective_parameters_from: FROM_DIMENSIONS.to_string(),
        })
    }

    /// A core from its effective parameters (a maker's data or a measurement). Ve = Ae·le;
    /// the centre and outer legs and Amin are taken equal to Ae; the window height (for the
    /// fringing factor) is taken equal to the winding width.
    #[allow(clippy::too_many_arguments)]
    pub fn from_effective(
        name: &str,
        effective_area: Area,
        effective_length: Length,
        window_area: Area,
        winding_width: Length,
        winding_height: Length,
        mean_turn_length: Length,
        surface_area: Area,
    ) -> Result<Core> {
        let ae = positive("effective_area", effective_area)?.value;
        let le = positive("effective_length", effective_length)?.value;
        Ok(Core {
            name: name.to_string(),
            family: CoreFamily::Custom,
            effective_area,
            effective_length,
            effective_volume: si(ae * le),
            minimum_area: effective_area,
            centre_leg_area: effective_area,
            outer_leg_area: effective_area,
            window_area: positive("window_area", window_area)?,
            window_height: positive("winding_width", winding_width)?,
            winding_width: positive("winding_width", winding_width)?,
            winding_height: positive("winding_height", winding_height)?,
            mean_turn_length: positive("mean_turn_length", mean_turn_length)?,
            surface_area: positive("surface_area", surface_area)?,
            effective_parameters_from: "given effective parameters".to_string(),
        })
    }

    /// Area product Ap = Aw·Ae (McLyman, *Transformer and Inductor Design Handbook*, 4th ed.).
    pub fn area_product(&self) -> f64 {
        self.window_area.value * self.effective_area.value
    }
}

crate::serialize_as_record!(Core);

impl Record for Core {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::new("name", self.name.as_str()),
            Field::new("family", self.family.as_str()),
            Field::quantity("effective_area", self.effective_area),
            Field::quantity("effective_length", self.effective_length),
            Field::quantity("effective_volume", self.effective_volume),
            Field::quantity("minimum_area", self.minimum_area),
            Field::quantity("centre_leg_area", self.centre_leg_area),
            Field::quantity("outer_leg_area", self.outer_leg_area),
            Field::quantity("window_area", self.window_area),
            Field::quantity("window_height", self.window_height),
            Field::quantity("winding_width", self.winding_width),
            Field::quantity("winding_height", self.winding_height),
            Field::quantity("mean_turn_length", self.mean_turn_length),
            Field::quantity("surface_area", self.surface_area),
            Field::new(
                "effective_parameters_from",
                self.effective_parameters_from.as_str(),
            ),
            Field::new(
                "area_product",
                crate::units::Quantity::new(
                    self.area_product(),
                    crate::units::Dimension {
                        exponents: [4, 0, 0, 0, 0, 0, 0, 0],
                    },
                ),
            ),
        ]
    }
}

/// Built-in pair sizes in mm: name, family, overall width, overall pair height (both
/// halves), depth, window height (pair), window width, centre-leg width (across the core) or
/// diameter, centre-leg depth (into the page; 0 for round), round?, outer-leg area in mm²
/// (0 = rectangular legs). IEC 62317 family sizes; dimensions are nominal values recalled
/// from memory — check them against the drawing of the core you buy, or define the core
/// yourself.
///
/// Heights are for the mated pair: the EFD entries once carried single-half heights and the
/// body length as depth, which halved their path length and inflated Ae. An EFD centre leg
/// is flat: wide across the core (8.9 mm on EFD20) and thin into the page (3.6 mm). The
/// ETD29 outer legs are given by their area (71 mm², the makers' Amin, value recalled from
/// memory): the rectangle estimate (overall width − window width)·depth gives 84 mm², which
/// made its Ae 9 % high.
#[allow(clippy::type_complexity)]
const PAIRED: &[(&str, CoreFamily, [f64; 8], bool, f64)] = &[
    (
        "E16/8/5",
        CoreFamily::E,
        [16.0, 16.4, 4.7, 11.4, 11.3, 4.7, 4.7, 0.0],
        false,
        0.0,
    ),
    (
        "E19/8/5",
        CoreFamily::E,
        [19.0, 16.0, 4.8, 11.4, 14.0, 4.8, 4.8, 0.0],
        false,
        0.0,
    ),
    (
        "E30/15/7",
        CoreFamily::E,
        [30.0, 30.4, 7.3, 19.4, 19.5, 7.3, 7.3, 0.0],
        false,
        0.0,
    ),
    (
        "E32/16/9",
        CoreFamily::E,
        [32.0, 32.8, 9.5, 22.4, 22.7, 9.5, 9.5, 0.0],
        false,
        0.0,
    ),
    (
        "EF20",
        CoreFamily::Ef,
        [20.0, 20.2, 5.9, 12.6, 14.1, 5.9, 5.9, 0.0],
        false,
        0.0,
    ),
    (
        "EF25",
        CoreFamily::Ef,
        [25.4, 25.6, 7.5, 17.4, 17.5, 7.5, 7.5, 0.0],
        false,
        0.0,
    ),
    (
        "EFD20",
        CoreFamily::Efd,
        [20.0, 20.0, 6.65, 15.4, 15.4, 8.9, 3.6, 0.0],
        false,
        0.0,
    ),
    (
        "EFD25",
        CoreFamily::Efd,
        [25.0, 25.0, 9.1, 18.6, 18.7, 11.4, 5.2, 0.0],
        false,
        0.0,
    ),
    (
        "ETD29",
        CoreFamily::Etd,
        [30.6, 31.6, 9.8, 22.0, 22.0, 9.8, 0.0, 71.0],
        true,
        0.0,
    ),
    (
        "ETD34",
        CoreFamily::Etd,
        [34.2, 34.6, 10.8, 23.6, 25.6, 10.8, 0.0, 0.0],
        true,
        0.0,
    ),
    (
        "ETD39",
        CoreFamily::Etd,
        [39.1, 39.6, 12.5, 28.4, 29.3, 12.5, 0.0, 0.0],
        true,
        0.0,
    ),
    (
        "ETD44",
        CoreFamily::Etd,
        [44.0, 44.6, 14.9, 32.2, 32.9, 14.9, 0.0, 0.0],
        true,
        0.0,
    ),
    (
        "EQ20",
        CoreFamily::Eq,
        [20.0, 14.0, 14.0, 8.2, 18.0, 8.8, 0.0, 60.0],
        true,
        0.0,
    ),
    (
        "EQ25",
        CoreFamily::Eq,
        [25.0, 16.0, 18.0, 8.4, 22.0, 11.0, 0.0, 100.0],
        true,
        0.0,
    ),
    (
        "RM8",
        CoreFamily::Rm,
        [23.2, 16.4, 19.7, 11.0, 17.3, 8.4, 0.0, 70.0],
        true,
        0.0,
    ),
    (
        "RM10",
        CoreFamily::Rm,
        [28.5, 18.6, 24.0, 12.4, 21.2, 10.7, 0.0, 110.0],
        true,
        0.0,
    ),
    (
        "PQ20/16",
        CoreFamily::Pq,
        [21.3, 16.2, 14.0, 10.3, 18.0, 8.8, 0.0, 60.0],
        true,
        0.0,
    ),
    (
        "PQ26/25",
        CoreFamily::Pq,
        [27.3, 24.8, 19.0, 16.1, 22.5, 12.0, 0.0, 120.0],
        true,
        0.0,
    ),
    (
        "PQ32/30",
        CoreFamily::Pq,
        [33.0, 30.4, 22.0, 21.3, 27.5, 13.45, 0.0, 160.0],
        true,
        0.0,
    ),
];

/// What built cores' effective parameters come from when computed.
const FROM_DIMENSIONS: &str = "IEC 60205 summation over the dimensions";

/// Makers' handbook effective parameters of the built-in standard sizes that have them: name,
/// Ae (mm²), le (mm), Amin (mm²); values recalled from memory. The IEC 60205 summation over
/// our recalled dimensions puts plain E and EF cores up to 17 % high on Ae (which would
/// understate the flux density by as much), so a built-in core takes these values for Ae, le,
/// Ve = Ae·le and Amin; its window, bobbin and turn length still come from the dimensions.
/// Sizes not listed keep the computed values and say so.
const HANDBOOK_EFFECTIVE: &[(&str, f64, f64, f64)] = &[
    ("E16/8/5", 20.1, 37.6, 19.3),
    ("E30/15/7", 60.0, 67.0, 49.0),
    ("E32/16/9", 83.0, 74.0, 81.0),
    ("EF20", 32.0, 46.0, 31.0),
    ("EF25", 52.5, 57.5, 51.5),
    ("EFD20", 31.0, 47.0, 29.0),
    ("EFD25", 58.0, 57.0, 55.0),
    ("ETD29", 76.0, 72.0, 71.0),
    ("ETD34", 97.1, 78.6, 91.6),
    ("ETD39", 125.0, 92.2, 123.0),
    ("ETD44", 173.0, 103.0, 172.0),
    ("RM8", 64.0, 38.0, 55.0),
    ("RM10", 98.0, 44.0, 89.0),
    ("PQ20/16", 62.0, 37.4, 59.0),
    ("PQ26/25", 120.0, 54.3, 108.0),
    ("PQ32/30", 161.0, 74.7, 142.0),
];

/// Built-in toroid sizes in mm (outer diameter, inner diameter, height), IEC 62317 style
/// ring sizes; nominal values recalled from memory.
const TOROIDS: &[(&str, [f64; 3])] = &[
    ("T16/9.6/6.3", [16.0, 9.6, 6.3]),
    ("T25/15/10", [25.0, 15.0, 10.0]),
    ("T29/19/7.5", [29.0, 19.0, 7.5]),
];

/// The dimensions of a built-in pair entry.
fn paired_dimensions(entry: &(&str, CoreFamily, [f64; 8], bool, f64)) -> PairedCoreDimensions {
    let (_, _, v, round, _) = entry;
    let mm = |x: f64| -> Length { si(x * 1e-3) };
    PairedCoreDimensions {
        overall_width: mm(v[0]),
        overall_height: mm(v[1]),
        depth: mm(v[2]),
        window_height: mm(v[3]),
        window_width: mm(v[4]),
        centre_leg_width: mm(v[5]),
        centre_leg_depth: if *round { mm(v[5]) } else { mm(v[6]) },
        round_centre_leg: *round,
        outer_leg_area: if v[7] > 0.0 {
            Some(si(v[7] * 1e-6))
        } else {
            None
        },
    }
}

fn build_paired(entry: &(&str, CoreFamily, [f64; 8], bool, f64)) -> Result<Core> {
    let (name, family, ..) = entry;
    let mut core = Core::paired(name, *family, &paired_dimensions(entry))?;
    if let Some((_, ae, le, amin)) = HANDBOOK_EFFECTIVE.iter().find(|h| h.0 == *name) {
        core.effective_area = si(ae * 1e-6);
        core.effective_length = si(le * 1e-3);
        core.effective_volume = si(ae * le * 1e-9);
        // never above the centre leg's own section from the dimensions
        core.minimum_area = si((amin.min(*ae) * 1e-6).min(core.centre_leg_area.value));
        core.effective_parameters_from =
            "makers' handbook values for this standard size (value recalled from memory)".into();
    }
    Ok(core)
}

/// A built-in pair core from its dimensions alone (IEC 60205 summation), without the handbook
/// effective parameters [`core_by_size`] uses: for checking the summation method.
pub fn core_from_built_in_dimensions(name: &str) -> Result<Core> {
    let want = normalise(name);
    let entry = PAIRED
        .iter()
        .find(|e| normalise(e.0) == want)
        .ok_or_else(|| Error::unknown(format!("no built-in pair core `{name}`")))?;
    Core::paired(entry.0, entry.1, &paired_dimensions(entry))
}

/// Every built-in core, smallest effective volume first.
pub fn core_shapes() -> Result<Vec<Core>> {
    built_in_shapes().map(<[Core]>::to_vec)
}

/// The built-in cores, computed from their tables once per process (they are constants).
fn built_in_shapes() -> Result<&'static [Core]> {
    static SHAPES: std::sync::OnceLock<Result<Vec<Core>>> = std::sync::OnceLock::new();
    match SHAPES.get_or_init(build_core_shapes) {
        Ok(v) => Ok(v),
        Err(e) => Err(e.clone()),
    }
}

fn build_core_shapes() -> Result<Vec<Core>> {
    let mut out = Vec::new();
    for e in PAIRED {
        out.push(build_paired(e)?);
    }
    for (name, v) in TOROIDS {
        out.push(Core::toroid(
            name,
            &ToroidDimensions {
                outer_diameter: si(v[0] * 1e-3),
                inner_diameter: si(v[1] * 1e-3),
                height: si(v[2] * 1e-3),
            },
        )?);
    }
    out.sort_by(|a, b| {
        a.effective_volume
            .value
            .total_cmp(&b.effective_volume.value)
    });
    Ok(out)
}

fn normalise(name: &str) -> String {
    name.chars()
        .filter(|c| !c.is_whitespace() && *c != '-' && *c != '_')
        .flat_map(char::to_uppercase)
        .collect()
}

/// A built-in core by its size name (`"ETD29"`, `"E19/8/5"`, `"T25/15/10"`); case, spaces,
/// `-` and `_` are ignored. An unknown name is an error that suggests the nearest known
/// name and lists them all.
pub fn core_by_size(name: &str) -> Result<Core> {
    let want = normalise(name);
    let all = built_in_shapes()?;
    if let Some(c) = all.iter().find(|c| normalise(&c.name) == want) {
        return Ok(c.clone());
    }
    let names: Vec<&str> = all.iter().map(|c| c.name.as_str()).collect();
    Err(Error::unknown(format!(
        "unknown core size `{name}`{}; known sizes: {}",
        crate::script::suggest::did_you_mean(name, &names),
        names.join(", ")
    )))
}

/// `core` when every computed parameter is finite and its effective area, length, volume
/// and minimum area are above zero; otherwise an error naming the first parameter that is
/// not (extreme but accepted combinations of dimensions could still overflow or underflow the
/// IEC 60205 sums; a silent NaN would reach every design built on the core).
fn finite_core(core: Core) -> Result<Core> {
    let areas = [
        ("effective_area", core.effective_area, true),
        ("minimum_area", core.minimum_area, true),
        ("centre_leg_area", core.centre_leg_area, true),
        ("outer_leg_area", core.outer_leg_area, true),
        ("window_area", core.window_area, false),
        ("surface_area", core.surface_area, false),
    ];
    let lengths = [
        ("effective_length", core.effective_length, true),
        ("window_height", core.window_height, false),
        ("winding_width", core.winding_width, false),
        ("winding_height", core.winding_height, false),
        ("mean_turn_length", core.mean_turn_length, false),
    ];
    let values = areas
        .iter()
        .map(|(n, a, p)| (*n, a.value, *p, "m²"))
        .chain(lengths.iter().map(|(n, l, p)| (*n, l.value, *p, "m")))
        .chain(std::iter::once((
            "effective_volume",
            core.effective_volume.value,
            true,
            "m³",
        )));
    for (n, v, must_be_positive, unit) in values {
        if !v.is_finite() || v < 0.0 || (must_be_positive && v == 0.0) {
            return Err(Error::out_of_range(format!(
                "core `{}`: its dimensions give {n} = {v} {unit}, not a usable core (check the dimensions for extreme values)",
                core.name
            )));
        }
    }
    Ok(core)
}

/// The largest core dimension accepted: power ferrite cores are well below a fifth of this.
const LARGEST_CORE_DIMENSION_M: f64 = 1.0;

/// The smallest core dimension accepted, 0.1 mm: the smallest power ferrite parts are
/// several times larger (common practice, no published source); below it the IEC 60205
/// sums (areas squared, then squared again in C2) lose their precision and underflow.
const SMALLEST_CORE_DIMENSION_M: f64 = 1e-4;

/// A core dimension: between [`SMALLEST_CORE_DIMENSION_M`] and [`LARGEST_CORE_DIMENSION_M`]
/// (outside, the effective parameters would describe no ferrite core, and their squares may
/// overflow or underflow).
fn core_dimension(name: &str, l: Length) -> Result<Length> {
    let l = positive(name, l)?;
    if l.value < SMALLEST_CORE_DIMENSION_M {
        return Err(Error::out_of_range(format!(
            "`{name}` = {} is below {} mm, outside the range of ferrite cores",
            Quantity::from_typed(l),
            SMALLEST_CORE_DIMENSION_M * 1e3
        )));
    }
    if l.value > LARGEST_CORE_DIMENSION_M {
        return Err(Error::out_of_range(format!(
            "`{name}` = {} is above {LARGEST_CORE_DIMENSION_M} m, outside the range of ferrite cores",
            Quantity::from_typed(l)
        )));
    }
    Ok(l)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_core_with_a_non_finite_parameter_is_refused_by_name() {
        let good = core_shapes().unwrap().into_iter().next().unwrap();
        assert!(finite_core(good.clone()).is_ok());
        let mut bad = good.clone();
        bad.effective_length = si(f64::NAN);
        let e = finite_core(bad).unwrap_err().to_string();
        assert!(e.contains("effective_length"), "{e}");
        let mut zero = good;
        zero.effective_area = si(0.0);
        let e = finite_core(zero).unwrap_err().to_string();
        assert!(e.contains("effective_area"), "{e}");
    }

    #[test]
    fn every_built_in_core_is_finite_and_positive() {
        for c in core_shapes().unwrap() {
            for v in [
                c.effective_area.value,
                c.effective_length.value,
                c.window_area.value,
                c.winding_width.value,
                c.winding_height.value,
                c.mean_turn_length.value,
                c.surface_area.value,
            ] {
                assert!(v.is_finite() && v > 0.0, "{}", c.name);
            }
            // Ae is an l/A²-weighted mean of the sections, so never below Amin (a ring's
            // Ae is below its uniform section h·(r2 − r1): the inner flux crowds)
            if c.family != CoreFamily::Toroid {
                assert!(
                    c.minimum_area.value <= c.effective_area.value * 1.0001,
                    "{}",
                    c.name
                );
            }
        }
    }

    #[test]
    fn equal_segments_give_their_own_area() {
        // Ae of a path of one uniform area is that area (IEC 60205 definition; hand check)
        let (ae, le, _) = effective_from_segments(&[
            Segment {
                length: 1.0,
                area: 2.0,
            },
            Segment {
                length: 3.0,
                area: 2.0,
            },
        ]);
        assert!((ae - 2.0).abs() < 1e-12 && (le - 4.0).abs() < 1e-12);
    }
}

//! Validation rules of a network, reported all at once.
//!
//! [`check_columns`] checks the in-memory columns and reports each violation
//! against the pore or throat index it concerns; file readers add the file
//! name, line and column (see [`Violation::file`]). [`warnings`] lists
//! suspicious but loadable features of a valid network.

use std::fmt;

use serde::Serialize;

use super::{Boundary, NetworkInfo, Pores, Throats};
use crate::shape::{G_CIRCLE, area};

/// The rule a network violates.
#[non_exhaustive]
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Rule {
    /// A radius is zero or negative.
    RadiusNotPositive,
    /// A value is NaN or infinite.
    NotFinite,
    /// A shape factor lies outside `(0, 1/(4π)]`.
    ShapeFactorOutOfRange,
    /// A volume is negative.
    NegativeVolume,
    /// A length is negative, or the conduit parts exceed the total length.
    BadLength,
    /// A throat names a pore that does not exist.
    MissingPore,
    /// A throat joins a pore to itself.
    SelfLoop,
    /// Two rows carry the same id.
    DuplicateId,
    /// Ids are not 0-based and contiguous.
    NonContiguousIds,
    /// No pore is tagged `inlet`.
    NoInlet,
    /// No pore is tagged `outlet`.
    NoOutlet,
    /// A field does not parse as a number, integer or tag.
    MalformedValue,
    /// A required column or key is missing.
    MissingColumn,
    /// A row has the wrong number of fields or the CSV is malformed.
    MalformedRow,
    /// A sample-level value (`network.toml`) is invalid.
    BadSampleValue,
    /// A binary file is truncated, corrupt, foreign or of a newer version.
    BadBinary,
    /// The network has no pores.
    Empty,
    /// A column name appears twice in a CSV header.
    DuplicateColumn,
    /// A value is finite but outside what a rock can hold: a radius outside
    /// [`RADIUS_RANGE_M`], pore volumes summing to more than the bulk
    /// volume (porosity above 1) or to no finite number, a sample length
    /// inconsistent with the pore positions beyond [`LENGTH_RATIO_REFUSED`].
    Unphysical,
}

/// Inscribed radii outside this range, m, are refused: below a tenth of a
/// nanometre is smaller than a water molecule, above a metre is no pore
/// (common practice).
pub const RADIUS_RANGE_M: [f64; 2] = [1.0e-10, 1.0];

/// Ratio between `length_m` and the extent of the pore centres along the
/// flow axis beyond which the network is refused (either way): a factor of
/// 1000 or more is a unit mistake (µm or mm given as m), not a sample
/// margin, which is a few pore spacings. Smaller mismatches beyond
/// `run::input_checks::LENGTH_RATIO_LIMIT` are warned about.
pub const LENGTH_RATIO_REFUSED: f64 = 1.0e3;

/// `length_m` over the extent of the pore centres along the flow axis,
/// and that extent (m); `None` when the centres do not span a positive
/// finite distance (one layer of pores).
pub fn length_extent_ratio(info: &NetworkInfo, pores: &Pores) -> Option<(f64, f64)> {
    let col = match info.flow_axis.index() {
        0 => &pores.x,
        1 => &pores.y,
        _ => &pores.z,
    };
    let (lo, hi) = col
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    let extent = hi - lo;
    (extent > 0.0 && extent.is_finite()).then(|| (info.length_m / extent, extent))
}

impl Rule {
    /// A short kebab-case code for the rule.
    pub fn code(self) -> &'static str {
        match self {
            Rule::RadiusNotPositive => "radius-not-positive",
            Rule::NotFinite => "not-finite",
            Rule::ShapeFactorOutOfRange => "shape-factor-out-of-range",
            Rule::NegativeVolume => "negative-volume",
            Rule::BadLength => "bad-length",
            Rule::MissingPore => "missing-pore",
            Rule::SelfLoop => "self-loop",
            Rule::DuplicateId => "duplicate-id",
            Rule::NonContiguousIds => "non-contiguous-ids",
            Rule::NoInlet => "no-inlet",
            Rule::NoOutlet => "no-outlet",
            Rule::MalformedValue => "malformed-value",
            Rule::MissingColumn => "missing-column",
            Rule::MalformedRow => "malformed-row",
            Rule::BadSampleValue => "bad-sample-value",
            Rule::BadBinary => "bad-binary",
            Rule::Empty => "empty",
            Rule::DuplicateColumn => "duplicate-column",
            Rule::Unphysical => "unphysical",
        }
    }
}

impl fmt::Display for Rule {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.code())
    }
}

/// What a violation is about, before a reader maps it to a file location.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Target {
    /// A pore, by index.
    Pore(u32),
    /// A throat, by index.
    Throat(u32),
    /// The network as a whole (sample values, faces).
    Network,
}

/// One rule violation with its location.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Violation {
    /// The rule violated.
    pub rule: Rule,
    /// What the violation concerns.
    pub target: Target,
    /// File the violation was found in, when read from a file.
    pub file: Option<String>,
    /// 1-based line in that file, when known.
    pub line: Option<u64>,
    /// Column or key name, when known.
    pub column: Option<String>,
    /// Human-readable detail (the offending value and the allowed range).
    pub detail: String,
}

impl Violation {
    /// A violation of `rule` about `target` in `column`.
    pub fn new(
        rule: Rule,
        target: Target,
        column: Option<&str>,
        detail: impl Into<String>,
    ) -> Self {
        Violation {
            rule,
            target,
            file: None,
            line: None,
            column: column.map(str::to_owned),
            detail: detail.into(),
        }
    }
}

impl fmt::Display for Violation {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (&self.file, self.line) {
            (Some(file), Some(line)) => write!(f, "{file}:{line}")?,
            (Some(file), None) => write!(f, "{file}")?,
            (None, _) => match self.target {
                Target::Pore(i) => write!(f, "pore {i}")?,
                Target::Throat(i) => write!(f, "throat {i}")?,
                Target::Network => write!(f, "network")?,
            },
        }
        if let Some(col) = &self.column {
            write!(f, ": column `{col}`")?;
        }
        write!(f, ": [{}] {}", self.rule, self.detail)
    }
}

/// A suspicious but loadable feature of a network.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Warning {
    /// Short kebab-case code.
    pub code: &'static str,
    /// What it concerns.
    pub target: Target,
    /// File, when known.
    pub file: Option<String>,
    /// 1-based line, when known.
    pub line: Option<u64>,
    /// Human-readable detail.
    pub detail: String,
}

impl fmt::Display for Warning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (&self.file, self.line) {
            (Some(file), Some(line)) => write!(f, "{file}:{line}: ")?,
            (Some(file), None) => write!(f, "{file}: ")?,
            _ => {}
        }
        write!(f, "[{}] {}", self.code, self.detail)
    }
}

fn check_value(
    out: &mut Vec<Violation>,
    target: Target,
    column: &str,
    value: f64,
    rule_if_bad: Option<(Rule, bool, &str)>,
) {
    if !value.is_finite() {
        out.push(Violation::new(
            Rule::NotFinite,
            target,
            Some(column),
            format!("value {value} is not a finite number"),
        ));
        return;
    }
    if let Some((rule, bad, allowed)) = rule_if_bad
        && bad
    {
        out.push(Violation::new(
            rule,
            target,
            Some(column),
            format!("value {value:e} is outside the allowed range {allowed}"),
        ));
    }
}

/// A radius: positive ([`Rule::RadiusNotPositive`]) and within
/// [`RADIUS_RANGE_M`] ([`Rule::Unphysical`]).
fn check_radius(out: &mut Vec<Violation>, t: Target, r: f64) {
    if r.is_finite() && r > 0.0 && !(RADIUS_RANGE_M[0]..=RADIUS_RANGE_M[1]).contains(&r) {
        out.push(Violation::new(
            Rule::Unphysical,
            t,
            Some("radius_m"),
            format!(
                "value {r:e} m is outside the physical range [{:e}, {:e}] m of a pore radius",
                RADIUS_RANGE_M[0], RADIUS_RANGE_M[1]
            ),
        ));
        return;
    }
    check_value(
        out,
        t,
        "radius_m",
        r,
        Some((Rule::RadiusNotPositive, r <= 0.0, "> 0")),
    );
}

/// Checks every column rule and returns all violations found, pores first,
/// then throats, then network-level rules.
pub fn check_columns(info: &NetworkInfo, pores: &Pores, throats: &Throats) -> Vec<Violation> {
    let mut out = Vec::new();
    let n_p = pores.len();
    let n_t = throats.len();
    let cols_p = [
        pores.x.len(),
        pores.y.len(),
        pores.z.len(),
        pores.shape_factor.len(),
        pores.volume.len(),
        pores.clay_volume.len(),
        pores.boundary.len(),
    ];
    let cols_t = [
        throats.pores.len(),
        throats.shape_factor.len(),
        throats.volume.len(),
        throats.clay_volume.len(),
        throats.length.len(),
        throats.conduit_a.len(),
        throats.conduit_b.len(),
    ];
    let marks_p = pores.oil_wet.as_ref().is_some_and(|m| m.len() != n_p);
    let marks_t = throats.oil_wet.as_ref().is_some_and(|m| m.len() != n_t);
    if cols_p.iter().any(|&c| c != n_p) || cols_t.iter().any(|&c| c != n_t) || marks_p || marks_t {
        out.push(Violation::new(
            Rule::MalformedRow,
            Target::Network,
            None,
            "columns of unequal length",
        ));
        return out;
    }
    for (name, v, ok) in [
        ("length_m", info.length_m, info.length_m > 0.0),
        ("area_m2", info.area_m2, info.area_m2 > 0.0),
        (
            "bulk_volume_m3",
            info.bulk_volume_m3,
            info.bulk_volume_m3 > 0.0,
        ),
    ] {
        if !(v.is_finite() && ok) {
            out.push(Violation::new(
                Rule::BadSampleValue,
                Target::Network,
                Some(name),
                format!("value {v} must be a positive finite number"),
            ));
        }
    }
    if let Some(ext) = info.extent_m
        && ext.iter().any(|v| !(v.is_finite() && *v > 0.0))
    {
        out.push(Violation::new(
            Rule::BadSampleValue,
            Target::Network,
            Some("extent_m"),
            format!("values {ext:?} must be positive finite numbers"),
        ));
    }
    if n_p == 0 {
        out.push(Violation::new(
            Rule::Empty,
            Target::Network,
            None,
            "the network has no pores",
        ));
        return out;
    }
    let g_range = "(0, 1/(4π)]";
    for i in 0..n_p {
        let t = Target::Pore(i as u32);
        check_value(&mut out, t, "x_m", pores.x[i], None);
        check_value(&mut out, t, "y_m", pores.y[i], None);
        check_value(&mut out, t, "z_m", pores.z[i], None);
        let r = pores.radius[i];
        check_radius(&mut out, t, r);
        let v = pores.volume[i];
        check_value(
            &mut out,
            t,
            "volume_m3",
            v,
            Some((Rule::NegativeVolume, v < 0.0, ">= 0")),
        );
        let g = pores.shape_factor[i];
        let bad_g = !(g > 0.0 && g <= G_CIRCLE * (1.0 + 1e-12));
        check_value(
            &mut out,
            t,
            "shape_factor",
            g,
            Some((Rule::ShapeFactorOutOfRange, bad_g, g_range)),
        );
        let c = pores.clay_volume[i];
        check_value(
            &mut out,
            t,
            "clay_volume_m3",
            c,
            Some((Rule::NegativeVolume, c < 0.0, ">= 0")),
        );
    }
    for i in 0..n_t {
        let t = Target::Throat(i as u32);
        let [a, b] = throats.pores[i];
        for (col, p) in [("pore_a", a), ("pore_b", b)] {
            if p as usize >= n_p {
                out.push(Violation::new(
                    Rule::MissingPore,
                    t,
                    Some(col),
                    format!("pore {p} does not exist (the network has {n_p} pores)"),
                ));
            }
        }
        if a == b {
            out.push(Violation::new(
                Rule::SelfLoop,
                t,
                Some("pore_b"),
                format!("throat joins pore {a} to itself"),
            ));
        }
        let r = throats.radius[i];
        check_radius(&mut out, t, r);
        let g = throats.shape_factor[i];
        let bad_g = !(g > 0.0 && g <= G_CIRCLE * (1.0 + 1e-12));
        check_value(
            &mut out,
            t,
            "shape_factor",
            g,
            Some((Rule::ShapeFactorOutOfRange, bad_g, g_range)),
        );
        let v = throats.volume[i];
        check_value(
            &mut out,
            t,
            "volume_m3",
            v,
            Some((Rule::NegativeVolume, v < 0.0, ">= 0")),
        );
        let c = throats.clay_volume[i];
        check_value(
            &mut out,
            t,
            "clay_volume_m3",
            c,
            Some((Rule::NegativeVolume, c < 0.0, ">= 0")),
        );
        let l = throats.length[i];
        check_value(
            &mut out,
            t,
            "length_m",
            l,
            Some((Rule::BadLength, l <= 0.0, "> 0")),
        );
        let la = throats.conduit_a[i];
        check_value(
            &mut out,
            t,
            "conduit_a_m",
            la,
            Some((Rule::BadLength, la < 0.0, ">= 0")),
        );
        let lb = throats.conduit_b[i];
        check_value(
            &mut out,
            t,
            "conduit_b_m",
            lb,
            Some((Rule::BadLength, lb < 0.0, ">= 0")),
        );
        if l.is_finite() && la.is_finite() && lb.is_finite() && la + lb > l * (1.0 + 1e-12) {
            out.push(Violation::new(
                Rule::BadLength,
                t,
                Some("conduit_a_m"),
                format!("conduit parts {la:e} + {lb:e} exceed the total length {l:e}"),
            ));
        }
    }
    sample_bounds(&mut out, info, pores, throats);
    if !pores.boundary.contains(&Boundary::Inlet) {
        out.push(Violation::new(
            Rule::NoInlet,
            Target::Network,
            Some("boundary"),
            "no pore is tagged `inlet`",
        ));
    }
    if !pores.boundary.contains(&Boundary::Outlet) {
        out.push(Violation::new(
            Rule::NoOutlet,
            Target::Network,
            Some("boundary"),
            "no pore is tagged `outlet`",
        ));
    }
    out
}

/// The network-level bounds: the pore volumes sum to a finite number no
/// larger than the bulk volume (porosity at most 1), and `length_m` agrees
/// with the pore positions within [`LENGTH_RATIO_REFUSED`]. Skipped where
/// the element values are already refused (not finite or negative).
fn sample_bounds(out: &mut Vec<Violation>, info: &NetworkInfo, pores: &Pores, throats: &Throats) {
    let element_problem = out.iter().any(|v| {
        matches!(v.rule, Rule::NotFinite | Rule::NegativeVolume) && v.target != Target::Network
    });
    let mut length_refused = false;
    let length = info.length_m;
    if length.is_finite()
        && length > 0.0
        && let Some((ratio, extent)) = length_extent_ratio(info, pores)
        && !(1.0 / LENGTH_RATIO_REFUSED..=LENGTH_RATIO_REFUSED).contains(&ratio)
    {
        length_refused = true;
        out.push(Violation::new(
            Rule::Unphysical,
            Target::Network,
            Some("length_m"),
            format!(
                "value {length:e} m is {ratio:.3e} times the {extent:.3e} m spanned by the pore \
                 centres along the flow axis (refused beyond a factor {LENGTH_RATIO_REFUSED:e} \
                 either way: a length in µm or mm given in m?)"
            ),
        ));
    }
    // A bulk volume derived from a refused length would only repeat it.
    let bulk = info.bulk_volume_m3;
    if !element_problem && !length_refused && bulk.is_finite() && bulk > 0.0 {
        let total = crate::numeric::ordered_sum(&pores.volume)
            + crate::numeric::ordered_sum(&throats.volume)
            + crate::numeric::ordered_sum(&pores.clay_volume)
            + crate::numeric::ordered_sum(&throats.clay_volume);
        if !total.is_finite() {
            out.push(Violation::new(
                Rule::Unphysical,
                Target::Network,
                Some("volume_m3"),
                format!(
                    "the pore and throat volumes sum to {total} m³, not a finite number \
                     (a volume near the largest double?); porosity cannot be computed"
                ),
            ));
        } else if total > bulk * (1.0 + 1e-9) {
            out.push(Violation::new(
                Rule::Unphysical,
                Target::Network,
                Some("volume_m3"),
                format!(
                    "porosity {:.6} is above 1: the pore and throat volumes (clay included) \
                     sum to {total:e} m³ but the bulk volume is {bulk:e} m³",
                    total / bulk
                ),
            ));
        }
    }
}

/// Volume warnings of a valid network: elements whose volume is smaller than
/// their own cross-section implies (a throat: `A ×` throat length; a pore:
/// the inscribed sphere `4πR³/3`). At most `limit` are listed individually;
/// the count of all is returned as well.
pub fn volume_warnings(network: &crate::Network, limit: usize) -> (Vec<Warning>, usize) {
    let mut out = Vec::new();
    let mut count = 0usize;
    let p = network.pores();
    for i in 0..p.len() {
        let r = p.radius[i];
        let min_v = 4.0 / 3.0 * std::f64::consts::PI * r * r * r;
        if p.volume[i] < min_v * (1.0 - 1e-9) {
            count += 1;
            if out.len() < limit {
                out.push(Warning {
                    code: "small-volume",
                    target: Target::Pore(i as u32),
                    file: None,
                    line: None,
                    detail: format!(
                        "pore {i}: volume {:e} m³ is below its inscribed sphere {min_v:e} m³",
                        p.volume[i]
                    ),
                });
            }
        }
    }
    let t = network.throats();
    for i in 0..t.len() {
        let min_v = area(t.radius[i], t.shape_factor[i]) * t.throat_length(i);
        if t.volume[i] < min_v * (1.0 - 1e-9) {
            count += 1;
            if out.len() < limit {
                out.push(Warning {
                    code: "small-volume",
                    target: Target::Throat(i as u32),
                    file: None,
                    line: None,
                    detail: format!(
                        "throat {i}: volume {:e} m³ is below cross-section × length {min_v:e} m³",
                        t.volume[i]
                    ),
                });
            }
        }
    }
    (out, count)
}

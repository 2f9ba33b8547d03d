//! 3-D export of a network and its occupancy as a VTK XML PolyData file
//! (`.vtp`), readable by ParaView, VisIt and the VTK library.
//!
//! ## Layout
//! One `<Piece>`: every pore is a point (its centre, m), every throat a
//! line cell joining its two pores. There are no vertex cells (so the cell
//! data is exactly the throats); show the pores with a point or glyph
//! representation.
//!
//! Point data (one value per pore):
//!
//! | array | type | meaning |
//! |---|---|---|
//! | `radius_m` | Float64 | inscribed radius, m |
//! | `occupancy` | Int8 | [`OCCUPANCY_WATER`] 0, [`OCCUPANCY_NONAQUEOUS`] 1 (centre holds the non-aqueous phase), [`OCCUPANCY_LAYERS`] 2 (water centre with non-aqueous corner layers) |
//! | `ganglion_id` | Int32 | trapped ganglion, `-1` none |
//! | `contact_angle_deg` | Float64 | advancing contact angle, degrees (only with angles) |
//! | `pressure` | Float64 | the caller's per-pore values (only when given); non-finite values are written as [`PRESSURE_MISSING`] |
//! | `pressure_known` | Int8 | 1 where `pressure` is finite, 0 where it holds the sentinel (only with `pressure`) |
//! | `boundary` | Int8 | 0 interior, 1 inlet, 2 outlet |
//!
//! Cell data (one value per throat): `radius_m`, `occupancy`,
//! `ganglion_id`, `contact_angle_deg`, same meanings.
//!
//! The small codes are signed (`Int8`), not `UInt8`: VTK's mappers take
//! unsigned-char scalars as colours by default, signed ones through the
//! colour map.
//!
//! Ganglion ids are renumbered `0, 1, …` in order of the lowest element
//! index (pores first, then throats) holding each ganglion, the numbering
//! of [`network_core::run::RunResults::ganglia`]: for the end state
//! of the first imbibition, id `k` here is ganglion `k` there.
//!
//! ## Format choice
//! Data arrays are written in the XML `format="ascii"`: plain decimal text,
//! no base64 or compression, so files can be read, diffed and checked with
//! any XML parser, at the cost of size (about 25 bytes per Float64 value).
//! Floats are written in Rust's shortest round-trip exponent form
//! (`1.25e-5`), which reads back to the same bits. NaN and infinities are
//! never written: not every reader parses them in ASCII arrays.

use std::fmt::Write as _;

use network_core::Network;
use network_core::run::EndState;
use network_core::wettability::ContactAngles;

pub use crate::error::VtkError;

/// `occupancy`: water fills the element.
pub const OCCUPANCY_WATER: u8 = 0;
/// `occupancy`: the non-aqueous phase fills the element's centre.
pub const OCCUPANCY_NONAQUEOUS: u8 = 1;
/// `occupancy`: water fills the centre, the non-aqueous phase sits in
/// corner layers.
pub const OCCUPANCY_LAYERS: u8 = 2;
/// `pressure` value written where the given pressure is not finite.
pub const PRESSURE_MISSING: f64 = -1.0e30;

/// Occupancy code of element `e` (see the [module docs](self)).
pub fn occupancy(state: &EndState, e: usize) -> u8 {
    if state.oil[e] {
        OCCUPANCY_NONAQUEOUS
    } else if state.layers[e] != 0 {
        OCCUPANCY_LAYERS
    } else {
        OCCUPANCY_WATER
    }
}

/// Ganglion id per element, renumbered from 0 by lowest element index
/// (`-1`: none).
pub fn ganglion_ids(state: &EndState) -> Vec<i32> {
    let mut map: std::collections::HashMap<u32, i32> = std::collections::HashMap::new();
    state
        .ganglion
        .iter()
        .map(|&g| {
            if g == u32::MAX {
                -1
            } else {
                let next = map.len() as i32;
                *map.entry(g).or_insert(next)
            }
        })
        .collect()
}

/// Writes `network` with the occupancy `state` (pores first, then
/// throats), the advancing contact angles of `angles` when given and the
/// per-pore `pressure` when given, as VTK XML PolyData text (see the
/// [module docs](self)).
pub fn write_vtp(
    network: &Network,
    state: &EndState,
    angles: Option<&ContactAngles>,
    pressure: Option<&[f64]>,
) -> Result<String, VtkError> {
    let n_p = network.n_pores();
    let n_t = network.n_throats();
    let n_e = n_p + n_t;
    let check = |what: &'static str, expected: usize, found: usize| {
        if expected == found {
            Ok(())
        } else {
            Err(VtkError::LengthMismatch {
                what,
                expected,
                found,
            })
        }
    };
    check("state.oil", n_e, state.oil.len())?;
    check("state.layers", n_e, state.layers.len())?;
    check("state.ganglion", n_e, state.ganglion.len())?;
    if let Some(a) = angles {
        check("angles.advancing", n_e, a.advancing.len())?;
    }
    if let Some(p) = pressure {
        check("pressure", n_p, p.len())?;
    }
    let pores = network.pores();
    let throats = network.throats();
    let gid = ganglion_ids(state);
    let occ: Vec<u8> = (0..n_e).map(|e| occupancy(state, e)).collect();
    let deg: Option<Vec<f64>> =
        angles.map(|a| a.advancing.iter().map(|r| r.to_degrees()).collect());

    // About 25 bytes per float value, 3 per small integer.
    let mut s = String::with_capacity(128 * n_p + 96 * n_t + 2048);
    s.push_str("<?xml version=\"1.0\"?>\n");
    s.push_str(
        "<VTKFile type=\"PolyData\" version=\"1.0\" byte_order=\"LittleEndian\" header_type=\"UInt64\">\n",
    );
    s.push_str("<PolyData>\n");
    let _ = writeln!(
        s,
        "<Piece NumberOfPoints=\"{n_p}\" NumberOfVerts=\"0\" NumberOfLines=\"{n_t}\" NumberOfStrips=\"0\" NumberOfPolys=\"0\">"
    );

    s.push_str("<PointData Scalars=\"occupancy\">\n");
    float_array(&mut s, "radius_m", 1, &pores.radius);
    int_array(
        &mut s,
        "Int8",
        "occupancy",
        occ[..n_p].iter().map(|&v| v as i64),
    );
    int_array(
        &mut s,
        "Int32",
        "ganglion_id",
        gid[..n_p].iter().map(|&v| v as i64),
    );
    if let Some(d) = &deg {
        float_array(&mut s, "contact_angle_deg", 1, &d[..n_p]);
    }
    if let Some(p) = pressure {
        let values: Vec<f64> = p
            .iter()
            .map(|&v| if v.is_finite() { v } else { PRESSURE_MISSING })
            .collect();
        float_array(&mut s, "pressure", 1, &values);
        int_array(
            &mut s,
            "Int8",
            "pressure_known",
            p.iter().map(|v| v.is_finite() as i64),
        );
    }
    int_array(
        &mut s,
        "Int8",
        "boundary",
        pores.boundary.iter().map(|&b| b as u8 as i64),
    );
    s.push_str("</PointData>\n");

    s.push_str("<CellData Scalars=\"occupancy\">\n");
    float_array(&mut s, "radius_m", 1, &throats.radius);
    int_array(
        &mut s,
        "Int8",
        "occupancy",
        occ[n_p..].iter().map(|&v| v as i64),
    );
    int_array(
        &mut s,
        "Int32",
        "ganglion_id",
        gid[n_p..].iter().map(|&v| v as i64),
    );
    if let Some(d) = &deg {
        float_array(&mut s, "contact_angle_deg", 1, &d[n_p..]);
    }
    s.push_str("</CellData>\n");

    s.push_str("<Points>\n");
    let mut xyz = Vec::with_capacity(3 * n_p);
    for i in 0..n_p {
        xyz.extend_from_slice(&pores.centre(i));
    }
    float_array(&mut s, "coordinates_m", 3, &xyz);
    s.push_str("</Points>\n");

    s.push_str("<Lines>\n");
    int_array(
        &mut s,
        "Int64",
        "connectivity",
        throats
            .pores
            .iter()
            .flat_map(|&[a, b]| [a as i64, b as i64]),
    );
    int_array(&mut s, "Int64", "offsets", (1..=n_t).map(|k| 2 * k as i64));
    s.push_str("</Lines>\n");

    s.push_str("</Piece>\n</PolyData>\n</VTKFile>\n");
    Ok(s)
}

/// Values per text line of a data array.
const PER_LINE: usize = 6;

fn float_array(s: &mut String, name: &str, components: usize, values: &[f64]) {
    let _ = write!(s, "<DataArray type=\"Float64\" Name=\"{name}\"");
    if components > 1 {
        let _ = write!(s, " NumberOfComponents=\"{components}\"");
    }
    s.push_str(" format=\"ascii\">\n");
    for (k, v) in values.iter().enumerate() {
        // Callers pass finite values; guard anyway so the file stays valid.
        let v = if v.is_finite() { *v } else { PRESSURE_MISSING };
        let _ = write!(s, "{v:e}");
        s.push(if (k + 1).is_multiple_of(PER_LINE) {
            '\n'
        } else {
            ' '
        });
    }
    if !values.len().is_multiple_of(PER_LINE) {
        s.push('\n');
    }
    s.push_str("</DataArray>\n");
}

fn int_array(s: &mut String, ty: &str, name: &str, values: impl Iterator<Item = i64>) {
    let _ = writeln!(
        s,
        "<DataArray type=\"{ty}\" Name=\"{name}\" format=\"ascii\">"
    );
    let mut k = 0usize;
    for v in values {
        let _ = write!(s, "{v}");
        k += 1;
        s.push(if k.is_multiple_of(4 * PER_LINE) {
            '\n'
        } else {
            ' '
        });
    }
    if !k.is_multiple_of(4 * PER_LINE) {
        s.push('\n');
    }
    s.push_str("</DataArray>\n");
}

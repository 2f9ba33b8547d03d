//! 3-D export of a network and its occupancy as a VTK XML PolyData file
//! (`.vtp`), readable by ParaView, VisIt and the VTK library.
//!
//! ## Layout
//! One `<Piece>`: every pore is a point (its centre, m), every throat a
//! line cell joining its two pores. There are no vertex cells (so the cell
//! data is exactly the throats); show the pores with a point or glyph
//! representation.
//!
//! Every array of the file, with the text that the file itself carries in
//! its field data `array_meanings` (one line per array present, the fields
//! separated by ` | `, in this order: name, location, unit, meaning, codes):
//!
//! | name | location | type | unit | meaning | codes |
//! |---|---|---|---|---|---|
//! | `array_meanings` | field data | String | - | one line per array of this file: name, location, unit, meaning and codes, separated by a vertical bar with a space on each side | - |
//! | `ganglion_version` | field data | String | - | version of the program that wrote the file | - |
//! | `description` | field data | String | - | what the file shows, given by the caller (for a run: the process and its end state) | - |
//! | `radius_m` | point data | Float64 | m | inscribed radius of the pore | - |
//! | `occupancy` | point data | Int8 | - | what fills the pore | 0 water, 1 non-aqueous phase in the centre, 2 water in the centre with non-aqueous corner layers |
//! | `ganglion_id` | point data | Int32 | - | trapped ganglion of the non-aqueous phase holding the pore, numbered from 0 by lowest element index (pores first, then throats) | -1 not in a trapped ganglion |
//! | `contact_angle_deg` | point data | Float64 | degree | advancing contact angle after the run | - |
//! | `pressure` | point data | Float64 | fraction of the imposed drop | water pressure of the last flow solve of the process, for a unit pressure drop between the faces (inlet 1, outlet 0) | NaN where the water does not flow |
//! | `boundary` | point data | Int8 | - | face the pore lies on | 0 interior, 1 inlet, 2 outlet |
//! | `radius_m` | cell data | Float64 | m | inscribed radius of the throat | - |
//! | `occupancy` | cell data | Int8 | - | what fills the throat | 0 water, 1 non-aqueous phase in the centre, 2 water in the centre with non-aqueous corner layers |
//! | `ganglion_id` | cell data | Int32 | - | trapped ganglion of the non-aqueous phase holding the throat, numbered from 0 by lowest element index (pores first, then throats) | -1 not in a trapped ganglion |
//! | `contact_angle_deg` | cell data | Float64 | degree | advancing contact angle after the run | - |
//! | `coordinates_m` | points | Float64 × 3 | m | pore centre (x, y, z) | - |
//! | `connectivity` | lines | Int32 or Int64 | - | the two pores of each throat (pore indices from 0) | - |
//! | `offsets` | lines | Int32 or Int64 | - | end of each throat's pair in connectivity (2, 4, 6, ...) | - |
//!
//! `contact_angle_deg` is written only with angles, `pressure` only when
//! given, `description` only when not empty ([`VtkOptions`]). The same lines
//! are [`ARRAY_MEANINGS`]. `connectivity` and `offsets` are Int32 while
//! every value fits (below 2³¹: networks of up to about 10⁹ throats), Int64
//! beyond.
//!
//! **NaN marks a missing value** in every Float64 array: a pressure where
//! the water does not flow, or any non-finite value handed to the writer
//! (written as the one quiet NaN `f64::NAN`, so files stay byte-identical).
//! VTK leaves NaN out of an array's range (`GetRange` of the demo's
//! `pressure` with 292 NaN is 0 to 1, checked with VTK 9.7) and its lookup
//! tables draw NaN in a separate NaN colour, so the colour scale keeps the
//! range of the real values.
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
//! ## Encodings
//! [`VtkEncoding::Binary`] (the default) writes every array, field data
//! included, as raw little-endian bytes in one `<AppendedData
//! encoding="raw">` block after the XML header: an underscore, then per
//! array a `UInt64` byte count followed by the values, each `<DataArray>`
//! pointing at its count by `offset` (bytes from the first byte after the
//! underscore). The file is not well-formed XML past that point (raw
//! bytes), which VTK readers expect. [`VtkEncoding::Ascii`]
//! (`ganglion run --vtk-ascii`) writes the same arrays as decimal text
//! inside each element: a well-formed XML file to read, diff and check
//! with any XML parser. Floats are written in Rust's shortest round-trip
//! exponent form (`1.25e-5`), which reads back to the same bits; a missing
//! value is written `nan`, which VTK's XML reader reads as NaN (checked
//! with VTK 9.7 by `scripts/test-vtk-reader.sh`; older readers that parse
//! with C++ stream extraction may stop at it, so use the binary default
//! with those); a hand-written parser must accept it too (Rust's and
//! Python's float parsers do).
//!
//! String arrays follow what VTK's own XML writer does (checked against
//! its source, `vtkXMLWriter.cxx`, and read back with VTK 9.7): the
//! element is `<Array type="String" NumberOfTuples="k">`; in ASCII every
//! byte of every string is written as a decimal integer (a signed char) and
//! each string ends with a `0`; in the appended raw data the strings are
//! stored back to back, each ended by a zero byte, the byte count covering
//! the terminators. A NUL inside a given string is written as a space.
//!
//! Measured size (the Kestrel demo network, 8000 pores and 16 000
//! throats, with contact angles and pressure: `ganglion run
//! studies/kestrel-waterflood.toml -o OUT [--vtk-ascii]`, then `ls -l
//! OUT/*.vtp`): binary 963 854 bytes, **120 bytes per pore**; ASCII
//! 1 858 222 bytes, **232 bytes per pore** (1.9 times more). Binary is the
//! raw data plus about 4 KB of XML: 54 bytes per pore (8 per Float64, 4 per
//! Int32, 1 per Int8, 24 for the coordinates) and 33 per throat (with Int32
//! indices), so a 10⁶-pore network with two throats per pore writes about
//! 120 MB per state, against about 230 MB in ASCII. Writing is about 20
//! times faster in binary: on the benchmark's 20³ lattice (8000 pores,
//! 16 000 throats, 120.5 and 231.8 bytes per pore) the median write took
//! 0.62 ms binary and 14.5 ms ASCII (`cargo bench -p ganglion-benches
//! --bench run_report -- vtp`, a shared 2-core machine under load).
//!
//! ## Memory
//! The file is built in one `Vec<u8>`, reserved at its exact size for
//! binary; values are streamed from the network and state columns into
//! it, with no per-array copies (occupancy codes, degrees, renumbered ids
//! and coordinates are computed on the way). The only extra memory is the
//! ganglion renumbering map (one entry per trapped ganglion). Measured on
//! a 100³ lattice (10⁶ pores, 2 × 10⁶ throats, pressure, no angles;
//! `cargo bench -p ganglion-benches --bench run_report -- vtp_large`):
//! binary 96.0 MB (96.0 bytes per pore) in 0.08 s, ASCII 170.8 MB in
//! 0.89 s; the peak resident memory the write added was 1.01 and 1.00
//! times the file size.

use std::collections::HashMap;
use std::io::Write as _;
use std::ops::Range;

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

/// How the arrays of a `.vtp` file are stored.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub enum VtkEncoding {
    /// Raw little-endian bytes in one appended block (compact, fast; the
    /// default).
    #[default]
    Binary,
    /// Decimal text inside each array element (readable, diffable, about
    /// 2.4 times larger).
    Ascii,
}

/// What [`write_vtp`] writes besides the network and the state.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct VtkOptions {
    /// Storage of the arrays. Default [`VtkEncoding::Binary`].
    pub encoding: VtkEncoding,
    /// Free text stored as the field-data string `description` (for a run:
    /// the process and its end state); left out when empty. Default empty.
    pub description: String,
}

/// The documented meaning of one array of a `.vtp` file.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ArrayMeaning {
    /// Array name in the file.
    pub name: &'static str,
    /// Where it lives: `field data`, `point data` (one value per pore),
    /// `cell data` (one per throat), `points` or `lines`.
    pub location: &'static str,
    /// Unit, `-` for none.
    pub unit: &'static str,
    /// What the values are.
    pub meaning: &'static str,
    /// Meaning of special values and codes, `-` for none.
    pub codes: &'static str,
}

impl ArrayMeaning {
    /// The line stored in the field data `array_meanings`: the five fields
    /// separated by ` | `.
    pub fn line(&self) -> String {
        format!(
            "{} | {} | {} | {} | {}",
            self.name, self.location, self.unit, self.meaning, self.codes
        )
    }
}

const OCCUPANCY_CODES: &str = "0 water, 1 non-aqueous phase in the centre, 2 water in the centre with non-aqueous corner layers";
const GANGLION_CODES: &str = "-1 not in a trapped ganglion";
const ANGLE_MEANING: &str = "advancing contact angle after the run";

/// Every array a `.vtp` file can hold, with its meaning (the table of the
/// [module docs](self), in file order).
pub const ARRAY_MEANINGS: &[ArrayMeaning] = &[
    ArrayMeaning {
        name: "array_meanings",
        location: "field data",
        unit: "-",
        meaning: "one line per array of this file: name, location, unit, meaning and codes, separated by a vertical bar with a space on each side",
        codes: "-",
    },
    ArrayMeaning {
        name: "ganglion_version",
        location: "field data",
        unit: "-",
        meaning: "version of the program that wrote the file",
        codes: "-",
    },
    ArrayMeaning {
        name: "description",
        location: "field data",
        unit: "-",
        meaning: "what the file shows, given by the caller (for a run: the process and its end state)",
        codes: "-",
    },
    ArrayMeaning {
        name: "radius_m",
        location: "point data",
        unit: "m",
        meaning: "inscribed radius of the pore",
        codes: "-",
    },
    ArrayMeaning {
        name: "occupancy",
        location: "point data",
        unit: "-",
        meaning: "what fills the pore",
        codes: OCCUPANCY_CODES,
    },
    ArrayMeaning {
        name: "ganglion_id",
        location: "point data",
        unit: "-",
        meaning: "trapped ganglion of the non-aqueous phase holding the pore, numbered from 0 by lowest element index (pores first, then throats)",
        codes: GANGLION_CODES,
    },
    ArrayMeaning {
        name: "contact_angle_deg",
        location: "point data",
        unit: "degree",
        meaning: ANGLE_MEANING,
        codes: "-",
    },
    ArrayMeaning {
        name: "pressure",
        location: "point data",
        unit: "fraction of the imposed drop",
        meaning: "water pressure of the last flow solve of the process, for a unit pressure drop between the faces (inlet 1, outlet 0)",
        codes: "NaN where the water does not flow",
    },
    ArrayMeaning {
        name: "boundary",
        location: "point data",
        unit: "-",
        meaning: "face the pore lies on",
        codes: "0 interior, 1 inlet, 2 outlet",
    },
    ArrayMeaning {
        name: "radius_m",
        location: "cell data",
        unit: "m",
        meaning: "inscribed radius of the throat",
        codes: "-",
    },
    ArrayMeaning {
        name: "occupancy",
        location: "cell data",
        unit: "-",
        meaning: "what fills the throat",
        codes: OCCUPANCY_CODES,
    },
    ArrayMeaning {
        name: "ganglion_id",
        location: "cell data",
        unit: "-",
        meaning: "trapped ganglion of the non-aqueous phase holding the throat, numbered from 0 by lowest element index (pores first, then throats)",
        codes: GANGLION_CODES,
    },
    ArrayMeaning {
        name: "contact_angle_deg",
        location: "cell data",
        unit: "degree",
        meaning: ANGLE_MEANING,
        codes: "-",
    },
    ArrayMeaning {
        name: "coordinates_m",
        location: "points",
        unit: "m",
        meaning: "pore centre (x, y, z)",
        codes: "-",
    },
    ArrayMeaning {
        name: "connectivity",
        location: "lines",
        unit: "-",
        meaning: "the two pores of each throat (pore indices from 0)",
        codes: "-",
    },
    ArrayMeaning {
        name: "offsets",
        location: "lines",
        unit: "-",
        meaning: "end of each throat's pair in connectivity (2, 4, 6, ...)",
        codes: "-",
    },
];

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
    let map = renumbering(&state.ganglion);
    state
        .ganglion
        .iter()
        .map(|g| renumbered(&map, *g))
        .collect()
}

/// New id of every trapped ganglion: 0, 1, … in order of first appearance.
fn renumbering(ganglion: &[u32]) -> HashMap<u32, i32> {
    let mut map = HashMap::new();
    for &g in ganglion {
        if g != u32::MAX {
            let next = map.len() as i32;
            map.entry(g).or_insert(next);
        }
    }
    map
}

fn renumbered(map: &HashMap<u32, i32>, g: u32) -> i32 {
    map.get(&g).copied().unwrap_or(-1)
}

/// Writes `network` with the occupancy `state` (pores first, then
/// throats), the advancing contact angles of `angles` when given and the
/// per-pore water `pressure` when given (for a unit pressure drop between
/// the faces; non-finite values mark missing ones), as a VTK XML PolyData
/// file in the encoding of `opts` (see the [module docs](self)).
///
/// The bytes depend only on the inputs (no time, no thread count).
pub fn write_vtp(
    network: &Network,
    state: &EndState,
    angles: Option<&ContactAngles>,
    pressure: Option<&[f64]>,
    opts: &VtkOptions,
) -> Result<Vec<u8>, VtkError> {
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
    let map = renumbering(&state.ganglion);
    // Field data.
    let mut field = vec![Array::strings("array_meanings", Vec::new())];
    field.push(Array::strings(
        "ganglion_version",
        vec![env!("CARGO_PKG_VERSION").to_string()],
    ));
    if !opts.description.is_empty() {
        field.push(Array::strings(
            "description",
            vec![opts.description.clone()],
        ));
    }

    let mut point = vec![
        Array::floats("radius_m", 1, n_p, pores.radius.iter().copied()),
        occupancy_array(state, 0..n_p),
        ganglion_array(state, &map, 0..n_p),
    ];
    point.extend(angles.map(|a| degrees_array(a, 0..n_p)));
    if let Some(p) = pressure {
        point.push(Array::floats("pressure", 1, n_p, p.iter().copied()));
    }
    point.push(Array {
        name: "boundary",
        scalar: Scalar::Int8,
        components: 1,
        n_values: n_p,
        values: Values::Int(Box::new(pores.boundary.iter().map(|&b| b as u8 as i64))),
    });

    let mut cell = vec![
        Array::floats("radius_m", 1, n_t, throats.radius.iter().copied()),
        occupancy_array(state, n_p..n_e),
        ganglion_array(state, &map, n_p..n_e),
    ];
    cell.extend(angles.map(|a| degrees_array(a, n_p..n_e)));

    let points = vec![Array::floats(
        "coordinates_m",
        3,
        3 * n_p,
        (0..n_p).flat_map(|i| pores.centre(i)),
    )];
    let index = if n_p <= i32::MAX as usize && 2 * n_t <= i32::MAX as usize {
        Scalar::Int32
    } else {
        Scalar::Int64
    };
    let lines = vec![
        Array {
            name: "connectivity",
            scalar: index,
            components: 1,
            n_values: 2 * n_t,
            values: Values::Int(Box::new(
                throats
                    .pores
                    .iter()
                    .flat_map(|&[a, b]| [a as i64, b as i64]),
            )),
        },
        Array {
            name: "offsets",
            scalar: index,
            components: 1,
            n_values: n_t,
            values: Values::Int(Box::new((1..=n_t).map(|k| 2 * k as i64))),
        },
    ];

    let mut sections = [
        (Section::Field, field),
        (Section::Point, point),
        (Section::Cell, cell),
        (Section::Points, points),
        (Section::Lines, lines),
    ];
    // The meanings of exactly the arrays present, in file order.
    let meanings: Vec<String> = sections
        .iter()
        .flat_map(|(s, arrays)| arrays.iter().map(move |a| (s.location(), a.name)))
        .filter_map(|(location, name)| {
            ARRAY_MEANINGS
                .iter()
                .find(|m| m.name == name && m.location == location)
                .map(ArrayMeaning::line)
        })
        .collect();
    sections[0].1[0] = Array::strings("array_meanings", meanings);

    Ok(match opts.encoding {
        VtkEncoding::Binary => binary(&mut sections, n_p, n_t),
        VtkEncoding::Ascii => ascii(&mut sections, n_p, n_t),
    })
}

/// `occupancy` of the elements `range`.
fn occupancy_array(state: &EndState, range: Range<usize>) -> Array<'_> {
    Array {
        name: "occupancy",
        scalar: Scalar::Int8,
        components: 1,
        n_values: range.len(),
        values: Values::Int(Box::new(range.map(|e| occupancy(state, e) as i64))),
    }
}

/// `ganglion_id` of the elements `range`, renumbered by `map`.
fn ganglion_array<'a>(
    state: &'a EndState,
    map: &'a HashMap<u32, i32>,
    range: Range<usize>,
) -> Array<'a> {
    Array {
        name: "ganglion_id",
        scalar: Scalar::Int32,
        components: 1,
        n_values: range.len(),
        values: Values::Int(Box::new(
            state.ganglion[range]
                .iter()
                .map(|&g| renumbered(map, g) as i64),
        )),
    }
}

/// `contact_angle_deg` of the elements `range`.
fn degrees_array(angles: &ContactAngles, range: Range<usize>) -> Array<'_> {
    Array {
        name: "contact_angle_deg",
        scalar: Scalar::Float64,
        components: 1,
        n_values: range.len(),
        values: Values::Float(Box::new(
            angles.advancing[range].iter().map(|r| r.to_degrees()),
        )),
    }
}

/// Where an array goes.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Section {
    Field,
    Point,
    Cell,
    Points,
    Lines,
}

impl Section {
    fn tag(self) -> &'static str {
        match self {
            Section::Field => "FieldData",
            Section::Point => "PointData",
            Section::Cell => "CellData",
            Section::Points => "Points",
            Section::Lines => "Lines",
        }
    }

    /// The location word of [`ArrayMeaning::location`].
    fn location(self) -> &'static str {
        match self {
            Section::Field => "field data",
            Section::Point => "point data",
            Section::Cell => "cell data",
            Section::Points => "points",
            Section::Lines => "lines",
        }
    }

    fn open_tag(self) -> String {
        match self {
            Section::Point | Section::Cell => format!("<{} Scalars=\"occupancy\">\n", self.tag()),
            _ => format!("<{}>\n", self.tag()),
        }
    }
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum Scalar {
    Int8,
    Int32,
    Int64,
    Float64,
    String,
}

impl Scalar {
    fn name(self) -> &'static str {
        match self {
            Scalar::Int8 => "Int8",
            Scalar::Int32 => "Int32",
            Scalar::Int64 => "Int64",
            Scalar::Float64 => "Float64",
            Scalar::String => "String",
        }
    }

    /// Bytes per value (strings: per byte).
    fn size(self) -> usize {
        match self {
            Scalar::Int8 | Scalar::String => 1,
            Scalar::Int32 => 4,
            Scalar::Int64 | Scalar::Float64 => 8,
        }
    }
}

/// The values of one array, produced once, in file order.
enum Values<'a> {
    Int(Box<dyn Iterator<Item = i64> + 'a>),
    Float(Box<dyn Iterator<Item = f64> + 'a>),
    Text(Vec<String>),
}

struct Array<'a> {
    name: &'static str,
    scalar: Scalar,
    components: usize,
    /// Values in all (tuples × components); strings: the number of strings.
    n_values: usize,
    values: Values<'a>,
}

impl<'a> Array<'a> {
    fn floats(
        name: &'static str,
        components: usize,
        n_values: usize,
        values: impl Iterator<Item = f64> + 'a,
    ) -> Array<'a> {
        Array {
            name,
            scalar: Scalar::Float64,
            components,
            n_values,
            values: Values::Float(Box::new(values)),
        }
    }

    fn strings(name: &'static str, strings: Vec<String>) -> Array<'a> {
        // A NUL would end the string early in the file.
        let strings: Vec<String> = strings.into_iter().map(|s| s.replace('\0', " ")).collect();
        Array {
            name,
            scalar: Scalar::String,
            components: 1,
            n_values: strings.len(),
            values: Values::Text(strings),
        }
    }

    /// Bytes of the values in the appended block (without the count).
    fn byte_len(&self) -> usize {
        match &self.values {
            Values::Text(s) => s.iter().map(|s| s.len() + 1).sum(),
            _ => self.n_values * self.scalar.size(),
        }
    }

    /// The opening tag up to (not including) the `format` attribute.
    fn start_tag(&self) -> String {
        if self.scalar == Scalar::String {
            // VTK writes string arrays as `<Array>` (not data arrays) with
            // their tuple count.
            format!(
                "<Array type=\"String\" Name=\"{}\" NumberOfTuples=\"{}\"",
                self.name, self.n_values
            )
        } else if self.components > 1 {
            format!(
                "<DataArray type=\"{}\" Name=\"{}\" NumberOfComponents=\"{}\"",
                self.scalar.name(),
                self.name,
                self.components
            )
        } else {
            format!(
                "<DataArray type=\"{}\" Name=\"{}\"",
                self.scalar.name(),
                self.name
            )
        }
    }

    fn end_tag(&self) -> &'static str {
        if self.scalar == Scalar::String {
            "</Array>\n"
        } else {
            "</DataArray>\n"
        }
    }
}

/// A missing value (any non-finite one) as the one quiet NaN.
fn canonical(v: f64) -> f64 {
    if v.is_finite() { v } else { f64::NAN }
}

const XML_HEAD: &str = "<?xml version=\"1.0\"?>\n<VTKFile type=\"PolyData\" version=\"1.0\" byte_order=\"LittleEndian\" header_type=\"UInt64\">\n<PolyData>\n";

fn piece_tag(n_p: usize, n_t: usize) -> String {
    format!(
        "<Piece NumberOfPoints=\"{n_p}\" NumberOfVerts=\"0\" NumberOfLines=\"{n_t}\" NumberOfStrips=\"0\" NumberOfPolys=\"0\">\n"
    )
}

/// The XML of all sections, each array element made by `element`.
fn xml(
    sections: &mut [(Section, Vec<Array<'_>>)],
    n_p: usize,
    n_t: usize,
    out: &mut Vec<u8>,
    mut element: impl FnMut(&mut Array<'_>, &mut Vec<u8>),
) {
    out.extend_from_slice(XML_HEAD.as_bytes());
    for (section, arrays) in sections.iter_mut() {
        if *section == Section::Point {
            out.extend_from_slice(piece_tag(n_p, n_t).as_bytes());
        }
        out.extend_from_slice(section.open_tag().as_bytes());
        for a in arrays.iter_mut() {
            element(a, out);
        }
        out.extend_from_slice(format!("</{}>\n", section.tag()).as_bytes());
    }
    out.extend_from_slice(b"</Piece>\n</PolyData>\n");
}

fn binary(sections: &mut [(Section, Vec<Array<'_>>)], n_p: usize, n_t: usize) -> Vec<u8> {
    let mut header = Vec::new();
    let mut offset = 0usize;
    xml(sections, n_p, n_t, &mut header, |a, out| {
        out.extend_from_slice(a.start_tag().as_bytes());
        let _ = writeln!(out, " format=\"appended\" offset=\"{offset}\"/>");
        offset += 8 + a.byte_len();
    });
    const APPENDED: &[u8] = b"<AppendedData encoding=\"raw\">\n_";
    const TAIL: &[u8] = b"\n</AppendedData>\n</VTKFile>\n";
    let mut out = Vec::with_capacity(header.len() + APPENDED.len() + offset + TAIL.len());
    out.extend_from_slice(&header);
    out.extend_from_slice(APPENDED);
    for (_, arrays) in sections.iter_mut() {
        for a in arrays.iter_mut() {
            out.extend_from_slice(&(a.byte_len() as u64).to_le_bytes());
            let scalar = a.scalar;
            match &mut a.values {
                Values::Float(v) => {
                    for x in v {
                        out.extend_from_slice(&canonical(x).to_le_bytes());
                    }
                }
                Values::Int(v) => match scalar {
                    Scalar::Int8 => out.extend(v.map(|x| x as i8 as u8)),
                    Scalar::Int32 => {
                        for x in v {
                            out.extend_from_slice(&(x as i32).to_le_bytes());
                        }
                    }
                    _ => {
                        for x in v {
                            out.extend_from_slice(&x.to_le_bytes());
                        }
                    }
                },
                Values::Text(strings) => {
                    for s in strings.iter() {
                        out.extend_from_slice(s.as_bytes());
                        out.push(0);
                    }
                }
            }
        }
    }
    out.extend_from_slice(TAIL);
    debug_assert_eq!(out.len(), out.capacity());
    out
}

/// Values per text line of a float array (integers: four times as many).
const PER_LINE: usize = 6;

fn ascii(sections: &mut [(Section, Vec<Array<'_>>)], n_p: usize, n_t: usize) -> Vec<u8> {
    let n_values: usize = sections
        .iter()
        .flat_map(|(_, a)| a.iter().map(|a| a.n_values))
        .sum();
    // About 25 bytes per float value, 3 per small integer.
    let mut out = Vec::with_capacity(16 * n_values + 4096);
    xml(sections, n_p, n_t, &mut out, |a, out| {
        out.extend_from_slice(a.start_tag().as_bytes());
        out.extend_from_slice(b" format=\"ascii\">\n");
        match &mut a.values {
            Values::Float(v) => text_lines(out, v, PER_LINE, |out, x| {
                let x = canonical(x);
                if x.is_nan() {
                    out.extend_from_slice(b"nan");
                } else {
                    let _ = write!(out, "{x:e}");
                }
            }),
            Values::Int(v) => text_lines(out, v, 4 * PER_LINE, |out, x| {
                let _ = write!(out, "{x}");
            }),
            Values::Text(strings) => {
                // One string per line: its bytes as signed chars, then 0.
                for s in strings.iter() {
                    for b in s.bytes() {
                        let _ = write!(out, "{} ", b as i8);
                    }
                    out.extend_from_slice(b"0\n");
                }
            }
        }
        out.extend_from_slice(a.end_tag().as_bytes());
    });
    out.extend_from_slice(b"</VTKFile>\n");
    out
}

/// Writes the values `per_line` to a line, separated by spaces.
fn text_lines<T>(
    out: &mut Vec<u8>,
    values: impl Iterator<Item = T>,
    per_line: usize,
    mut put: impl FnMut(&mut Vec<u8>, T),
) {
    let mut k = 0usize;
    for v in values {
        put(out, v);
        k += 1;
        out.push(if k.is_multiple_of(per_line) {
            b'\n'
        } else {
            b' '
        });
    }
    if !k.is_multiple_of(per_line) {
        out.push(b'\n');
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The module docs' table and [`ARRAY_MEANINGS`] say the same: every
    /// entry's fields appear, in order, in one row of the table.
    #[test]
    fn module_docs_table_matches_the_array_meanings() {
        let source = include_str!("vtk.rs");
        let rows: Vec<&str> = source
            .lines()
            .filter(|l| l.starts_with("//! | `"))
            .collect();
        assert_eq!(rows.len(), ARRAY_MEANINGS.len());
        for (m, row) in ARRAY_MEANINGS.iter().zip(&rows) {
            let cells: Vec<String> = row
                .trim_start_matches("//! |")
                .trim_end_matches('|')
                .split('|')
                .map(|c| c.trim().to_string())
                .collect();
            assert_eq!(cells.len(), 6, "{row}");
            assert_eq!(cells[0], format!("`{}`", m.name), "{row}");
            assert_eq!(
                [&cells[1], &cells[3], &cells[4], &cells[5]],
                [m.location, m.unit, m.meaning, m.codes],
                "{row}"
            );
        }
    }

    #[test]
    fn meanings_are_ascii_and_never_hold_the_field_separator() {
        for m in ARRAY_MEANINGS {
            for f in [m.name, m.location, m.unit, m.meaning, m.codes] {
                assert!(f.is_ascii() && !f.contains('|'), "{f}");
            }
            assert_eq!(m.line().split(" | ").count(), 5);
        }
    }
}

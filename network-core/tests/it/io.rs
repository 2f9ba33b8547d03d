//! Network files: round trips, one bad file per validation rule, binary
//! refusals, warnings, atomic output, and never-panic properties.

use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

use network_core::io::{self, ReadError, WriteError};
use network_core::network::validate::{Rule, Target};
use network_core::{Axis, Boundary, Network, NetworkInfo, Pores, Throats};

// ------------------------------------------------------------- helpers

static COUNTER: AtomicU64 = AtomicU64::new(0);

/// A fresh, empty scratch folder unique to this process and call.
fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!(
        "ganglion-io-test-{}-{name}-{}",
        std::process::id(),
        COUNTER.fetch_add(1, Ordering::Relaxed)
    ));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

const PORES: &str = "pores.csv";
const THROATS: &str = "throats.csv";
const TOML: &str = "network.toml";

/// A small valid CSV network: a chain of four pores along x, inlet at
/// pore 0 and outlet at pore 3. Pore `k` is on line `k + 2` of pores.csv
/// and throat `k` on line `k + 2` of throats.csv.
#[derive(Clone)]
struct Fixture {
    pores: String,
    throats: String,
    toml: String,
}

impl Fixture {
    fn valid() -> Fixture {
        Fixture {
            pores: "id,x_m,y_m,z_m,radius_m,volume_m3,shape_factor,clay_volume_m3,boundary\n\
                    0,0,0,0,2e-5,4e-14,0.04,0,inlet\n\
                    1,1e-4,0,0,2e-5,4e-14,0.05,0,\n\
                    2,2e-4,0,0,2e-5,4e-14,0.07,0,\n\
                    3,3e-4,0,0,2e-5,4e-14,0.03,0,outlet\n"
                .to_owned(),
            throats: "id,pore_a,pore_b,radius_m,shape_factor,length_m,volume_m3\n\
                      0,0,1,1e-5,0.0625,1e-4,3e-14\n\
                      1,1,2,1e-5,0.0625,1e-4,3e-14\n\
                      2,2,3,1e-5,0.0625,1e-4,3e-14\n"
                .to_owned(),
            toml: "name = \"chain\"\nflow_axis = \"x\"\nlength_m = 3e-4\narea_m2 = 1e-8\n"
                .to_owned(),
        }
    }

    fn replace_line(text: &str, line: usize, new: &str) -> String {
        let mut lines: Vec<&str> = text.lines().collect();
        lines[line - 1] = new;
        lines.join("\n") + "\n"
    }

    fn pores_line(mut self, line: usize, new: &str) -> Fixture {
        self.pores = Fixture::replace_line(&self.pores, line, new);
        self
    }

    fn throats_line(mut self, line: usize, new: &str) -> Fixture {
        self.throats = Fixture::replace_line(&self.throats, line, new);
        self
    }

    fn toml_line(mut self, line: usize, new: &str) -> Fixture {
        self.toml = Fixture::replace_line(&self.toml, line, new);
        self
    }

    fn write(&self, name: &str) -> PathBuf {
        let dir = scratch(name);
        std::fs::write(dir.join(PORES), &self.pores).unwrap();
        std::fs::write(dir.join(THROATS), &self.throats).unwrap();
        std::fs::write(dir.join(TOML), &self.toml).unwrap();
        dir
    }

    fn read(&self, name: &str) -> Result<io::Loaded, ReadError> {
        let dir = self.write(name);
        let result = io::read_network(&dir);
        std::fs::remove_dir_all(&dir).unwrap();
        result
    }
}

type Expect<'a> = (Rule, &'a str, Option<u64>, Option<&'a str>);

/// Reads `fixture` and asserts the exact list of violations: rule, file
/// name, 1-based line and column, in order.
fn check(name: &str, fixture: &Fixture, expect: &[Expect<'_>]) {
    let err = match fixture.read(name) {
        Ok(_) => panic!("{name}: expected an invalid network"),
        Err(e) => e,
    };
    let got: Vec<(Rule, String, Option<u64>, Option<String>)> = err
        .violations()
        .iter()
        .map(|v| {
            let file = v
                .file
                .as_deref()
                .map(|f| {
                    Path::new(f)
                        .file_name()
                        .unwrap()
                        .to_string_lossy()
                        .into_owned()
                })
                .unwrap_or_default();
            (v.rule, file, v.line, v.column.clone())
        })
        .collect();
    let want: Vec<(Rule, String, Option<u64>, Option<String>)> = expect
        .iter()
        .map(|&(r, f, l, c)| (r, f.to_owned(), l, c.map(str::to_owned)))
        .collect();
    assert_eq!(got, want, "{name}:\n{err}");
}

/// Every f64 of a network as raw bits, plus the non-float fields, so that
/// equality means bit-identical.
fn bits(n: &Network) -> (Vec<u64>, Vec<[u32; 2]>, Vec<Boundary>, String) {
    let p = n.pores();
    let t = n.throats();
    let i = n.info();
    let mut v: Vec<u64> = vec![
        i.length_m.to_bits(),
        i.area_m2.to_bits(),
        i.bulk_volume_m3.to_bits(),
    ];
    if let Some(e) = i.extent_m {
        v.extend(e.iter().map(|x| x.to_bits()));
    }
    for col in [
        &p.x,
        &p.y,
        &p.z,
        &p.radius,
        &p.shape_factor,
        &p.volume,
        &p.clay_volume,
        &t.radius,
        &t.shape_factor,
        &t.volume,
        &t.clay_volume,
        &t.length,
        &t.conduit_a,
        &t.conduit_b,
    ] {
        v.extend(col.iter().map(|x| x.to_bits()));
    }
    let text = format!(
        "{}|{:?}|{:?}|{}",
        i.name,
        i.description,
        i.flow_axis,
        n.n_pores()
    );
    (v, t.pores.clone(), p.boundary.clone(), text)
}

/// A hand-made network whose values are awkward for decimal text:
/// subnormals, 0.1, 1e-300, 17-significant-digit values, -0.0.
fn awkward_network() -> Network {
    let info = NetworkInfo {
        name: "awkward \"values\", commas".into(),
        flow_axis: Axis::Y,
        length_m: 0.1 + 0.2, // 0.30000000000000004
        area_m2: 1e-300,
        // Porosity at most 1 (the volumes below sum to about 0.1 m³).
        bulk_volume_m3: 1.234_567_890_123_456_7e-1,
        extent_m: Some([5e-324, 0.1, 9.876_543_210_987_654e300]),
        description: Some("line one\nline two, with = and # signs".into()),
    };
    let xs = [-0.0, 0.1, 1e-300, 2.225_073_858_507_201e-308];
    let mut pores = Pores::with_capacity(4);
    for (k, &x) in xs.iter().enumerate() {
        pores.x.push(x);
        pores.y.push(k as f64 * 0.3);
        pores.z.push(1.0 / 3.0);
        pores
            .radius
            // Awkward for text, inside the physical range [1e-10, 1] m.
            .push([1e-10, 1e-5, 0.1 + 0.7, 0.999_999_999_999_999_9][k]);
        pores
            .shape_factor
            .push([0.04, 1.0 / (4.0 * std::f64::consts::PI), 0.062_5, 1e-300][k]);
        pores.volume.push([0.0, f64::from_bits(3), 1e-300, 0.1][k]);
        pores.clay_volume.push([0.0, 1e-17, 0.0, 3.3e-15][k]);
        pores.boundary.push(
            [
                Boundary::Inlet,
                Boundary::Interior,
                Boundary::Interior,
                Boundary::Outlet,
            ][k],
        );
    }
    let mut throats = Throats::with_capacity(3);
    for k in 0..3 {
        throats.pores.push([k as u32, k as u32 + 1]);
        throats
            .radius
            .push([1.000_000_000_000_000_2e-10, 0.1, 7.1e-6][k]);
        throats
            .shape_factor
            .push([0.01, 0.048_112_522_432_468_82, 0.07][k]);
        throats.length.push([1.0, 0.3, 1.7976931348623157e300][k]);
        throats.volume.push([0.0, 1e-15, 5e-324][k]);
        throats.clay_volume.push([0.0, 0.0, 1e-300][k]);
        throats.conduit_a.push([0.1, 0.0, 1e-5][k]);
        throats.conduit_b.push([0.2, 5e-324, 0.3][k]);
    }
    Network::new(info, pores, throats).expect("awkward network is valid")
}

// ---------------------------------------------------------- round trips

#[test]
fn csv_and_binary_round_trips_are_bit_identical() {
    let network = awkward_network();
    let dir = scratch("round-trip");
    let csv1 = dir.join("net");
    let bin = dir.join("net.gnet");
    let csv2 = dir.join("net-again");

    io::write_csv(&network, &csv1).unwrap();
    let from_csv = io::read_network(&csv1).unwrap().network;
    assert_eq!(bits(&from_csv), bits(&network));

    io::write_binary(&from_csv, &bin).unwrap();
    let from_bin = io::read_network(&bin).unwrap().network;
    assert_eq!(bits(&from_bin), bits(&network));

    io::write_csv(&from_bin, &csv2).unwrap();
    for f in [PORES, THROATS, TOML] {
        assert_eq!(
            std::fs::read(csv1.join(f)).unwrap(),
            std::fs::read(csv2.join(f)).unwrap(),
            "{f} differs after CSV -> binary -> CSV"
        );
    }
    let bin2 = dir.join("again.gnet");
    io::write_binary(&io::read_network(&csv2).unwrap().network, &bin2).unwrap();
    assert_eq!(std::fs::read(&bin).unwrap(), std::fs::read(&bin2).unwrap());

    let h = io::network_hash(&network);
    assert_eq!(h.len(), 16);
    assert_eq!(h, io::network_hash(&from_csv));
    assert_eq!(h, io::network_hash(&from_bin));
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn network_hash_changes_with_one_bit_of_one_value() {
    let network = awkward_network();
    let (info, pores, mut throats) = network.clone().into_parts();
    throats.volume[1] = f64::from_bits(throats.volume[1].to_bits() + 1);
    let nudged = Network::new(info.clone(), pores.clone(), throats).unwrap();
    assert_ne!(io::network_hash(&network), io::network_hash(&nudged));
    let mut renamed = info;
    renamed.name.push('!');
    let (_, _, throats) = network.clone().into_parts();
    let renamed = Network::new(renamed, pores, throats).unwrap();
    assert_ne!(io::network_hash(&network), io::network_hash(&renamed));
}

#[test]
fn network_hash_is_stable_across_builds() {
    // Regression guard of the canonical payload and digest: results files
    // echo this hash, so it may change only together with a new binary
    // format version (then update the value and say so in the commit).
    let network = Fixture::valid().read("hash-golden").unwrap().network;
    assert_eq!(io::network_hash(&network), GOLDEN_HASH);
}

const GOLDEN_HASH: &str = "b20102cbf98225ef";

#[test]
fn binary_layout_matches_the_documented_format() {
    // Expected bytes built by hand from the layout in `io::binary` docs:
    // magic, version 1, payload length, postcard payload, CRC-32.
    let info = NetworkInfo {
        name: "ab".into(),
        flow_axis: Axis::X,
        length_m: 1e-4,
        area_m2: 1e-8,
        bulk_volume_m3: 1e-12,
        extent_m: None,
        description: None,
    };
    let mut pores = Pores::with_capacity(2);
    for (i, b) in [Boundary::Inlet, Boundary::Outlet].into_iter().enumerate() {
        // 1e-4 m apart, as length_m says (issue 18 refuses a length
        // inconsistent with the pore positions).
        pores.x.push(i as f64 * 1e-4);
        pores.y.push(0.5);
        pores.z.push(-1.0);
        pores.radius.push(2e-5);
        pores.shape_factor.push(0.04);
        pores.volume.push(1e-13);
        pores.clay_volume.push(0.0);
        pores.boundary.push(b);
    }
    let mut throats = Throats::with_capacity(1);
    throats.pores.push([0, 1]);
    throats.radius.push(1e-5);
    throats.shape_factor.push(0.0625);
    throats.volume.push(1e-14);
    throats.clay_volume.push(0.0);
    throats.length.push(1e-4);
    throats.conduit_a.push(2e-5);
    throats.conduit_b.push(3e-5);
    let network = Network::new(info, pores, throats).unwrap();

    let mut payload = vec![2, b'a', b'b', 0, 0]; // name, no description, axis x
    for x in [1e-4f64, 1e-8, 1e-12] {
        payload.extend_from_slice(&x.to_le_bytes());
    }
    payload.extend_from_slice(&[0, 2, 1]); // no extent, 2 pores, 1 throat
    let column = |payload: &mut Vec<u8>, values: &[f64]| {
        payload.push(8 * values.len() as u8); // varint byte length (< 128)
        for x in values {
            payload.extend_from_slice(&x.to_le_bytes());
        }
    };
    for c in [
        [0.0, 1e-4],
        [0.5, 0.5],
        [-1.0, -1.0],
        [2e-5, 2e-5],
        [0.04, 0.04],
        [1e-13, 1e-13],
        [0.0, 0.0],
    ] {
        column(&mut payload, &c);
    }
    payload.extend_from_slice(&[2, 1, 2]); // boundary: inlet, outlet
    payload.push(8);
    payload.extend_from_slice(&0u32.to_le_bytes());
    payload.extend_from_slice(&1u32.to_le_bytes());
    for x in [1e-5, 0.0625, 1e-14, 0.0, 1e-4, 2e-5, 3e-5] {
        column(&mut payload, &[x]);
    }
    let mut expected = b"GANGLNET".to_vec();
    expected.extend_from_slice(&1u32.to_le_bytes());
    expected.extend_from_slice(&(payload.len() as u64).to_le_bytes());
    expected.extend_from_slice(&payload);
    expected.extend_from_slice(&crc32fast::hash(&payload).to_le_bytes());

    let dir = scratch("layout");
    let path = dir.join("ab.gnet");
    io::write_binary(&network, &path).unwrap();
    assert_eq!(std::fs::read(&path).unwrap(), expected);
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn csv_defaults_order_and_unknown_names() {
    // Rows out of order, columns in any order, optional columns absent or
    // empty, an unknown column and an unknown key.
    let fixture = Fixture {
        pores: "boundary,shape_factor,id,z_m,y_m,x_m,radius_m,volume_m3,porosity\n\
                outlet,0.03,2,0,0,2e-4,3e-5,1.2e-13,x\n\
                INLET,0.04,0,0,0,0,2e-5,4e-14,y\n\
                ,0.05,1,0,0,1e-4,1e-5,4e-14,z\n"
            .to_owned(),
        throats: "id,pore_b,pore_a,radius_m,shape_factor,length_m,volume_m3,conduit_a_m,clay_volume_m3\n\
                  1,2,1,5e-6,0.0625,1e-4,1e-14,,1e-16\n\
                  0,1,0,5e-6,0.0625,1e-4,1e-14,3e-5,\n"
            .to_owned(),
        toml: "name = \"defaults\"\nflow_axis = \"x\"\nlength_m = 2e-4\narea_m2 = 1e-8\ncolour = \"red\"\n"
            .to_owned(),
    };
    let loaded = fixture.read("defaults").unwrap();
    let n = &loaded.network;
    let p = n.pores();
    let t = n.throats();
    assert_eq!(p.x, vec![0.0, 1e-4, 2e-4]);
    assert_eq!(
        p.boundary,
        vec![Boundary::Inlet, Boundary::Interior, Boundary::Outlet]
    );
    assert_eq!(p.clay_volume, vec![0.0; 3], "absent clay column: 0");
    assert_eq!(t.pores, vec![[0, 1], [1, 2]]);
    assert_eq!(t.clay_volume, vec![0.0, 1e-16], "empty clay field: 0");
    // conduit_a given for throat 0; conduit_a of throat 1 empty and
    // conduit_b absent: min(radius of that pore, 0.45 × 1e-4 = 4.5e-5).
    assert_eq!(t.conduit_a, vec![3e-5, 1e-5]);
    assert_eq!(t.conduit_b, vec![1e-5, 3e-5]);
    assert_eq!(n.info().bulk_volume_m3, 2e-4 * 1e-8);

    let codes: Vec<(&str, Option<String>, Option<u64>)> = loaded
        .warnings
        .iter()
        .map(|w| {
            (
                w.code,
                w.file
                    .as_deref()
                    .map(|f| Path::new(f).file_name().unwrap().to_string_lossy().into()),
                w.line,
            )
        })
        .collect();
    assert!(codes.contains(&("unknown-key", Some(TOML.into()), Some(5))));
    assert!(codes.contains(&("unknown-column", Some(PORES.into()), Some(1))));
}

#[test]
fn conduit_default_caps_at_045_of_length() {
    // Pore radius 2e-5 > 0.45 × 4e-5 = 1.8e-5: the cap applies.
    let f = Fixture::valid().throats_line(3, "1,1,2,1e-5,0.0625,4e-5,1e-15");
    let loaded = f.read("conduit-cap").unwrap();
    let t = loaded.network.throats();
    assert_eq!(t.conduit_a[1], 0.45 * 4e-5);
    assert_eq!(t.conduit_b[1], 0.45 * 4e-5);
    assert_eq!(t.conduit_a[0], 2e-5);
}

#[test]
fn shape_factor_of_a_circle_is_accepted() {
    // 1/(4π) = 0.0795774715459476... is the upper bound, inclusive.
    let f = Fixture::valid().pores_line(3, "1,1e-4,0,0,2e-5,4e-14,0.07957747154594767,0,");
    assert!(f.read("g-circle").is_ok());
}

// ------------------------------------------------------ one rule per file

#[test]
fn malformed_number_is_located() {
    check(
        "malformed-number",
        &Fixture::valid().pores_line(3, "1,1e-4,0,0,abc,4e-14,0.05,0,"),
        &[(Rule::MalformedValue, PORES, Some(3), Some("radius_m"))],
    );
}

#[test]
fn empty_required_field_is_malformed() {
    check(
        "empty-field",
        &Fixture::valid().throats_line(2, "0,0,1,1e-5,0.0625,,3e-14"),
        &[(Rule::MalformedValue, THROATS, Some(2), Some("length_m"))],
    );
}

#[test]
fn malformed_id_tag_and_pore_reference() {
    check(
        "malformed-id",
        &Fixture::valid().pores_line(4, "two,2e-4,0,0,2e-5,4e-14,0.07,0,"),
        &[(Rule::MalformedValue, PORES, Some(4), Some("id"))],
    );
    check(
        "malformed-tag",
        &Fixture::valid().pores_line(5, "3,3e-4,0,0,2e-5,4e-14,0.03,0,exit"),
        &[
            (Rule::MalformedValue, PORES, Some(5), Some("boundary")),
            (Rule::NoOutlet, PORES, None, Some("boundary")),
        ],
    );
    check(
        "malformed-ref",
        &Fixture::valid().throats_line(3, "1,-1,2,1e-5,0.0625,1e-4,3e-14"),
        &[(Rule::MalformedValue, THROATS, Some(3), Some("pore_a"))],
    );
}

#[test]
fn missing_required_column_is_located_on_the_header() {
    let mut f = Fixture::valid();
    f.pores = f
        .pores
        .lines()
        .map(|l| {
            let fields: Vec<&str> = l.split(',').collect();
            let kept: Vec<&str> = fields
                .iter()
                .enumerate()
                .filter(|(i, _)| *i != 6)
                .map(|(_, s)| *s)
                .collect();
            kept.join(",") + "\n"
        })
        .collect();
    check(
        "missing-column",
        &f,
        &[(Rule::MissingColumn, PORES, Some(1), Some("shape_factor"))],
    );
}

#[test]
fn duplicate_column_is_located_on_the_header() {
    let f = Fixture::valid()
        .throats_line(
            1,
            "id,pore_a,pore_b,radius_m,shape_factor,length_m,volume_m3,radius_m",
        )
        .throats_line(2, "0,0,1,1e-5,0.0625,1e-4,3e-14,1e-5")
        .throats_line(3, "1,1,2,1e-5,0.0625,1e-4,3e-14,1e-5")
        .throats_line(4, "2,2,3,1e-5,0.0625,1e-4,3e-14,1e-5");
    check(
        "duplicate-column",
        &f,
        &[(Rule::DuplicateColumn, THROATS, Some(1), Some("radius_m"))],
    );
}

#[test]
fn wrong_field_count_is_a_malformed_row() {
    check(
        "field-count",
        &Fixture::valid().throats_line(3, "1,1,2,1e-5,0.0625,1e-4"),
        &[(Rule::MalformedRow, THROATS, Some(3), None)],
    );
}

#[test]
fn duplicate_id_reports_the_repeat_and_the_gap() {
    check(
        "duplicate-id",
        &Fixture::valid().pores_line(4, "1,2e-4,0,0,2e-5,4e-14,0.07,0,"),
        &[
            (Rule::DuplicateId, PORES, Some(4), Some("id")),
            (Rule::NonContiguousIds, PORES, None, Some("id")),
        ],
    );
}

#[test]
fn non_contiguous_ids_are_reported() {
    check(
        "gap-id",
        &Fixture::valid().pores_line(5, "7,3e-4,0,0,2e-5,4e-14,0.03,0,outlet"),
        &[
            (Rule::NonContiguousIds, PORES, Some(5), Some("id")),
            (Rule::NonContiguousIds, PORES, None, Some("id")),
        ],
    );
    // 1-based throat ids: id 3 is out of range and id 0 is missing.
    let f = Fixture::valid()
        .throats_line(2, "1,0,1,1e-5,0.0625,1e-4,3e-14")
        .throats_line(3, "2,1,2,1e-5,0.0625,1e-4,3e-14")
        .throats_line(4, "3,2,3,1e-5,0.0625,1e-4,3e-14");
    check(
        "one-based",
        &f,
        &[
            (Rule::NonContiguousIds, THROATS, Some(4), Some("id")),
            (Rule::NonContiguousIds, THROATS, None, Some("id")),
        ],
    );
}

#[test]
fn non_positive_radius_is_reported() {
    check(
        "radius",
        &Fixture::valid()
            .pores_line(2, "0,0,0,0,-2e-5,4e-14,0.04,0,inlet")
            .throats_line(3, "1,1,2,0,0.0625,1e-4,3e-14"),
        &[
            (Rule::RadiusNotPositive, PORES, Some(2), Some("radius_m")),
            (Rule::RadiusNotPositive, THROATS, Some(3), Some("radius_m")),
        ],
    );
}

#[test]
fn nan_and_infinity_are_not_finite() {
    check(
        "not-finite",
        &Fixture::valid()
            .pores_line(3, "1,NaN,0,0,2e-5,4e-14,0.05,0,")
            .throats_line(4, "2,2,3,1e-5,0.0625,inf,3e-14"),
        &[
            (Rule::NotFinite, PORES, Some(3), Some("x_m")),
            (Rule::NotFinite, THROATS, Some(4), Some("length_m")),
        ],
    );
}

#[test]
fn shape_factor_out_of_range_is_reported() {
    check(
        "shape-factor",
        &Fixture::valid()
            .pores_line(3, "1,1e-4,0,0,2e-5,4e-14,0.08,0,")
            .throats_line(2, "0,0,1,1e-5,0,1e-4,3e-14"),
        &[
            (
                Rule::ShapeFactorOutOfRange,
                PORES,
                Some(3),
                Some("shape_factor"),
            ),
            (
                Rule::ShapeFactorOutOfRange,
                THROATS,
                Some(2),
                Some("shape_factor"),
            ),
        ],
    );
}

#[test]
fn negative_volumes_are_reported() {
    check(
        "volume",
        &Fixture::valid()
            .pores_line(4, "2,2e-4,0,0,2e-5,4e-14,0.07,-1e-18,")
            .throats_line(3, "1,1,2,1e-5,0.0625,1e-4,-3e-14"),
        &[
            (Rule::NegativeVolume, PORES, Some(4), Some("clay_volume_m3")),
            (Rule::NegativeVolume, THROATS, Some(3), Some("volume_m3")),
        ],
    );
}

#[test]
fn bad_lengths_are_reported() {
    check(
        "length-zero",
        &Fixture::valid().throats_line(2, "0,0,1,1e-5,0.0625,0,3e-14"),
        &[(Rule::BadLength, THROATS, Some(2), Some("length_m"))],
    );
    let mut f = Fixture::valid();
    f.throats =
        "id,pore_a,pore_b,radius_m,shape_factor,length_m,volume_m3,conduit_a_m,conduit_b_m\n\
                 0,0,1,1e-5,0.0625,1e-4,3e-14,2e-5,2e-5\n\
                 1,1,2,1e-5,0.0625,1e-4,3e-14,6e-5,6e-5\n\
                 2,2,3,1e-5,0.0625,1e-4,3e-14,2e-5,-2e-5\n"
            .to_owned();
    check(
        "conduit-sum",
        &f,
        &[
            (Rule::BadLength, THROATS, Some(3), Some("conduit_a_m")),
            (Rule::BadLength, THROATS, Some(4), Some("conduit_b_m")),
        ],
    );
}

#[test]
fn missing_pore_and_self_loop_are_reported() {
    check(
        "missing-pore",
        &Fixture::valid().throats_line(4, "2,2,9,1e-5,0.0625,1e-4,3e-14"),
        &[(Rule::MissingPore, THROATS, Some(4), Some("pore_b"))],
    );
    check(
        "self-loop",
        &Fixture::valid().throats_line(3, "1,1,1,1e-5,0.0625,1e-4,3e-14"),
        &[(Rule::SelfLoop, THROATS, Some(3), Some("pore_b"))],
    );
}

#[test]
fn missing_faces_are_reported() {
    check(
        "no-inlet",
        &Fixture::valid().pores_line(2, "0,0,0,0,2e-5,4e-14,0.04,0,"),
        &[(Rule::NoInlet, PORES, None, Some("boundary"))],
    );
    check(
        "no-outlet",
        &Fixture::valid().pores_line(5, "3,3e-4,0,0,2e-5,4e-14,0.03,0,"),
        &[(Rule::NoOutlet, PORES, None, Some("boundary"))],
    );
}

#[test]
fn empty_tables_are_reported() {
    let mut f = Fixture::valid();
    f.pores = "id,x_m,y_m,z_m,radius_m,volume_m3,shape_factor\n".to_owned();
    check("no-pores", &f, &[(Rule::Empty, PORES, None, None)]);
    f.pores = String::new();
    check(
        "empty-file",
        &f,
        &[(Rule::MissingColumn, PORES, Some(1), None)],
    );
}

#[test]
fn bad_sample_values_name_key_and_line() {
    check(
        "toml-length",
        &Fixture::valid().toml_line(3, "length_m = -3e-4"),
        &[(Rule::BadSampleValue, TOML, Some(3), Some("length_m"))],
    );
    check(
        "toml-axis",
        &Fixture::valid().toml_line(2, "flow_axis = \"w\""),
        &[(Rule::BadSampleValue, TOML, Some(2), Some("flow_axis"))],
    );
    check(
        "toml-type",
        &Fixture::valid().toml_line(4, "area_m2 = \"large\""),
        &[(Rule::BadSampleValue, TOML, Some(4), Some("area_m2"))],
    );
    check(
        "toml-missing",
        &Fixture::valid().toml_line(1, "# no name"),
        &[(Rule::MissingColumn, TOML, None, Some("name"))],
    );
    check(
        "toml-extent",
        &Fixture::valid().toml_line(4, "area_m2 = 1e-8\nextent_m = [1e-3, 2e-3]"),
        &[(Rule::BadSampleValue, TOML, Some(5), Some("extent_m"))],
    );
    check(
        "toml-extent-range",
        &Fixture::valid().toml_line(4, "area_m2 = 1e-8\n\nextent_m = [1e-3, -2e-3, 1e-3]"),
        &[(Rule::BadSampleValue, TOML, Some(6), Some("extent_m"))],
    );
    check(
        "toml-bulk",
        &Fixture::valid().toml_line(4, "area_m2 = 1e-8\nbulk_volume_m3 = 0"),
        &[(Rule::BadSampleValue, TOML, Some(5), Some("bulk_volume_m3"))],
    );
    check(
        "toml-syntax",
        &Fixture::valid().toml_line(3, "length_m = = 3e-4"),
        &[(Rule::BadSampleValue, TOML, Some(3), None)],
    );
}

#[test]
fn every_problem_of_all_three_files_is_reported_at_once() {
    let f = Fixture::valid()
        .toml_line(3, "length_m = 0")
        .pores_line(2, "0,0,0,0,2e-5,4e-14,0.04,0,")
        .pores_line(3, "1,1e-4,zero,0,2e-5,4e-14,0.05,0,")
        .pores_line(4, "2,2e-4,0,0,2e-5,-4e-14,0.09,0,")
        .throats_line(2, "0,0,0,1e-5,0.0625,1e-4,3e-14")
        .throats_line(3, "1,1,2,1e-5")
        .throats_line(4, "2,2,5,-1e-5,0.0625,1e-4,3e-14");
    check(
        "many",
        &f,
        &[
            (Rule::BadSampleValue, TOML, Some(3), Some("length_m")),
            (Rule::MalformedValue, PORES, Some(3), Some("y_m")),
            (Rule::NegativeVolume, PORES, Some(4), Some("volume_m3")),
            (
                Rule::ShapeFactorOutOfRange,
                PORES,
                Some(4),
                Some("shape_factor"),
            ),
            (Rule::NoInlet, PORES, None, Some("boundary")),
            (Rule::SelfLoop, THROATS, Some(2), Some("pore_b")),
            (Rule::MalformedRow, THROATS, Some(3), None),
            (Rule::MissingPore, THROATS, Some(4), Some("pore_b")),
            (Rule::RadiusNotPositive, THROATS, Some(4), Some("radius_m")),
        ],
    );
}

#[test]
fn invalid_network_display_lists_file_line_column_rule_detail() {
    let err = Fixture::valid()
        .pores_line(3, "1,1e-4,0,0,abc,4e-14,0.05,0,")
        .throats_line(3, "1,1,1,1e-5,0.0625,1e-4,3e-14")
        .read("display")
        .unwrap_err();
    let text = err.to_string();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), 3, "{text}");
    assert!(
        lines[0].ends_with("invalid network, 2 problem(s):"),
        "{text}"
    );
    assert!(
        lines[1]
            .ends_with("pores.csv:3: column `radius_m`: [malformed-value] `abc` is not a number"),
        "{text}"
    );
    assert!(
        lines[2].contains("throats.csv:3: column `pore_b`: [self-loop] "),
        "{text}"
    );
}

#[test]
fn missing_file_is_an_io_error_naming_it() {
    let dir = Fixture::valid().write("missing-file");
    std::fs::remove_file(dir.join(THROATS)).unwrap();
    match io::read_network(&dir) {
        Err(ReadError::Io { path, .. }) => assert_eq!(path, dir.join(THROATS)),
        other => panic!("expected an I/O error, got {other:?}"),
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

/// A chain of `n` pores along z with awkward but valid values.
fn chain(n: usize) -> Network {
    let info = NetworkInfo {
        name: "chain".into(),
        flow_axis: Axis::Z,
        length_m: (n - 1) as f64 * 1e-4,
        area_m2: 1e-8,
        bulk_volume_m3: (n - 1) as f64 * 1e-12,
        extent_m: None,
        description: None,
    };
    let mut pores = Pores::with_capacity(n);
    for i in 0..n {
        let u = network_core::numeric::unit_hash(7, 1, i as u64);
        pores.x.push(u * 1e-6);
        pores.y.push(-u * 1e-7);
        pores.z.push(i as f64 * 1e-4);
        pores.radius.push(1e-5 + 1e-5 * u);
        pores.shape_factor.push(0.02 + 0.05 * u);
        pores.volume.push(1e-13 * (1.0 + u));
        pores.clay_volume.push(1e-17 * u);
        pores.boundary.push(if i == 0 {
            Boundary::Inlet
        } else if i == n - 1 {
            Boundary::Outlet
        } else {
            Boundary::Interior
        });
    }
    let mut throats = Throats::with_capacity(n - 1);
    for t in 0..n - 1 {
        let u = network_core::numeric::unit_hash(7, 2, t as u64);
        throats.pores.push([t as u32, t as u32 + 1]);
        throats.radius.push(5e-6 * (1.0 + u));
        throats.shape_factor.push(0.03 + 0.03 * u);
        throats.length.push(1e-4);
        throats.volume.push(1e-13 * u);
        throats.clay_volume.push(0.0);
        throats.conduit_a.push(pores.radius[t]);
        throats.conduit_b.push(pores.radius[t + 1]);
    }
    Network::new(info, pores, throats).unwrap()
}

#[test]
fn multi_chunk_csv_reads_identically_with_one_or_two_threads() {
    // ~2.5 MB of pores: several parse chunks.
    let network = chain(20_000);
    let dir = scratch("threads");
    let csv = dir.join("chain");
    io::write_csv(&network, &csv).unwrap();
    let read_with = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| io::read_network(&csv).unwrap().network)
    };
    let one = read_with(1);
    let two = read_with(2);
    assert_eq!(bits(&one), bits(&network));
    assert_eq!(bits(&two), bits(&network));
    std::fs::remove_dir_all(&dir).unwrap();
}

// ------------------------------------------------------- binary refusals

fn binary_bytes() -> Vec<u8> {
    let dir = scratch("bin-src");
    let path = dir.join("n.gnet");
    io::write_binary(&awkward_network(), &path).unwrap();
    let bytes = std::fs::read(&path).unwrap();
    std::fs::remove_dir_all(&dir).unwrap();
    bytes
}

fn read_bytes(name: &str, bytes: &[u8]) -> Result<io::Loaded, ReadError> {
    let dir = scratch(name);
    let path = dir.join("n.gnet");
    std::fs::write(&path, bytes).unwrap();
    let r = io::read_network(&path);
    std::fs::remove_dir_all(&dir).unwrap();
    r
}

fn refusal(name: &str, bytes: &[u8]) -> String {
    let err = read_bytes(name, bytes).expect_err("must be refused");
    let v = err.violations();
    assert_eq!(v.len(), 1, "{err}");
    assert_eq!(v[0].rule, Rule::BadBinary);
    assert_eq!(v[0].target, Target::Network);
    assert!(v[0].file.as_deref().unwrap().ends_with("n.gnet"));
    v[0].detail.clone()
}

#[test]
fn binary_refuses_foreign_truncated_corrupt_and_newer_files() {
    let good = binary_bytes();
    assert!(read_bytes("bin-good", &good).is_ok());

    assert!(refusal("foreign", b"id,x_m\n0,1\n").contains("not a Ganglion network file"));
    assert!(refusal("empty", b"").contains("truncated"));
    assert!(refusal("magic-only", b"GANGL").contains("truncated"));
    assert!(refusal("header", &good[..15]).contains("truncated"));
    assert!(refusal("cut", &good[..good.len() - 1]).contains("truncated"));

    let mut flipped = good.clone();
    flipped[40] ^= 0x10;
    assert!(refusal("flip", &flipped).contains("checksum"));

    let mut newer = good.clone();
    newer[8..12].copy_from_slice(&2u32.to_le_bytes());
    assert!(refusal("newer", &newer).contains("newer"));

    let mut longer = good.clone();
    longer.push(0);
    assert!(refusal("trailing", &longer).contains("corrupt"));
}

#[test]
fn binary_with_valid_checksum_but_invalid_content_is_validated() {
    // Re-encode a payload whose throat joins a pore to itself: the checksum
    // matches, so the network rules must catch it.
    let mut bytes = binary_bytes();
    let n = u64::from_le_bytes(bytes[12..20].try_into().unwrap()) as usize;
    // The throat end column is the only 24-byte array of u32 pairs:
    // [0,1],[1,2],[2,3]; find it and make throat 1 join pore 1 to itself.
    let ends: Vec<u8> = [0u32, 1, 1, 2, 2, 3]
        .iter()
        .flat_map(|x| x.to_le_bytes())
        .collect();
    let at = bytes
        .windows(ends.len())
        .position(|w| w == ends.as_slice())
        .expect("throat ends present");
    bytes[at + 12..at + 16].copy_from_slice(&1u32.to_le_bytes());
    let crc = crc32fast::hash(&bytes[20..20 + n]);
    bytes[20 + n..].copy_from_slice(&crc.to_le_bytes());
    let err = read_bytes("bin-invalid", &bytes).unwrap_err();
    let v = err.violations();
    assert_eq!(v.len(), 1, "{err}");
    assert_eq!(v[0].rule, Rule::SelfLoop);
    assert_eq!(v[0].target, Target::Throat(1));
}

// ------------------------------------------------------------- warnings

#[test]
fn cut_off_pores_and_small_volumes_are_summarised() {
    // Pores 4-5 form a dead end touching only the inlet; pore 6 is isolated.
    let mut f = Fixture::valid();
    f.pores.push_str(
        "4,0,1e-4,0,2e-5,4e-14,0.04,0,inlet\n\
         5,1e-4,1e-4,0,2e-5,4e-14,0.04,0,\n\
         6,5e-4,5e-4,0,2e-5,1e-20,0.04,0,\n",
    );
    f.throats.push_str("3,4,5,1e-5,0.0625,1e-4,3e-14\n");
    let loaded = f.read("cut-off").unwrap();
    let w = &loaded.warnings;
    let cut = w.iter().find(|w| w.code == "disconnected-pores").unwrap();
    assert!(
        cut.detail.starts_with("3 of 7 pores lie in 2 component(s)"),
        "{}",
        cut.detail
    );
    assert!(
        cut.detail
            .contains("2 touch only the inlet, 0 only the outlet, 1 neither; 1 isolated")
    );
    // Pore 6's volume 1e-20 is below its inscribed sphere 4π(2e-5)³/3.
    let small: Vec<_> = w.iter().filter(|w| w.code == "small-volume").collect();
    assert_eq!(small.len(), 1);
    assert_eq!(small[0].target, Target::Pore(6));
    assert_eq!(small[0].line, Some(8));
    assert!(small[0].file.as_deref().unwrap().ends_with(PORES));
}

#[test]
fn many_small_volumes_give_a_bounded_number_of_warnings() {
    // Every throat volume is 1e-20, far below A × throat length.
    let mut f = Fixture::valid();
    f.throats = f.throats.replace(",3e-14", ",1e-20");
    let loaded = f.read("small-volumes").unwrap();
    let small: Vec<_> = loaded
        .warnings
        .iter()
        .filter(|w| w.code == "small-volume")
        .collect();
    // Three listed (with their lines) and no summary: there are only three.
    assert_eq!(small.len(), 3);
    assert_eq!(small[2].line, Some(4));
    let mut f = Fixture::valid();
    f.pores = f.pores.replace(",4e-14,", ",1e-20,");
    f.throats = f.throats.replace(",3e-14", ",1e-20");
    let loaded = f.read("small-volumes-2").unwrap();
    let small: Vec<_> = loaded
        .warnings
        .iter()
        .filter(|w| w.code == "small-volume")
        .collect();
    assert_eq!(small.len(), 4);
    assert!(
        small[3].detail.starts_with("4 more element(s)") && small[3].detail.contains("(7 in all)"),
        "{}",
        small[3].detail
    );
}

// -------------------------------------------------------- atomic output

fn entries(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

#[test]
fn writing_csv_creates_or_updates_a_folder_without_leftovers() {
    let network = awkward_network();
    let root = scratch("write-csv");
    let dir = root.join("net");
    io::write_csv(&network, &dir).unwrap();
    assert_eq!(
        entries(&root),
        vec!["net".to_owned()],
        "no temporary sibling"
    );
    assert_eq!(entries(&dir), vec![TOML, PORES, THROATS]);

    // Into an existing folder: the three files are replaced, others kept.
    std::fs::write(dir.join("notes.txt"), "keep me").unwrap();
    let other = Fixture::valid().read("write-csv-src").unwrap().network;
    io::write_csv(&other, &dir).unwrap();
    assert_eq!(entries(&dir), vec![TOML, "notes.txt", PORES, THROATS]);
    assert_eq!(bits(&io::read_network(&dir).unwrap().network), bits(&other));

    // A file in the way.
    let file = root.join("file");
    std::fs::write(&file, "x").unwrap();
    assert!(matches!(
        io::write_csv(&network, &file),
        Err(WriteError::NotADirectory { .. })
    ));
    // A missing parent folder.
    assert!(matches!(
        io::write_binary(&network, &root.join("no").join("n.gnet")),
        Err(WriteError::Io { .. })
    ));
    assert_eq!(entries(&root), vec!["file".to_owned(), "net".to_owned()]);
    std::fs::remove_dir_all(&root).unwrap();
}

// ----------------------------------------------------- never-panic props

mod never_panics {
    use super::*;
    use proptest::prelude::*;
    use proptest::test_runner::{Config, RngSeed};

    /// 96 cases per property, or `GANGLION_FUZZ_CASES` for long runs.
    fn config() -> Config {
        Config {
            cases: std::env::var("GANGLION_FUZZ_CASES")
                .ok()
                .and_then(|v| v.parse().ok())
                .unwrap_or(96),
            rng_seed: RngSeed::Fixed(0x6761_6e67),
            failure_persistence: None,
            ..Config::default()
        }
    }

    /// [`crate::fuzz::mutate_with`] with the characters CSV rows and
    /// numbers are made of.
    fn mutate(text: &str, edits: &[(usize, u8, u8)]) -> Vec<u8> {
        const ALPHABET: &[u8] = b"0123456789,.-+eE\n\r\" ainfNx_";
        crate::fuzz::mutate_with(text, edits, ALPHABET)
    }

    proptest! {
        #![proptest_config(config())]

        #[test]
        fn mutated_csv_folder_reads_ok_or_err(
            file in 0usize..3,
            edits in proptest::collection::vec((any::<usize>(), any::<u8>(), any::<u8>()), 1..12),
        ) {
            let f = Fixture::valid();
            let dir = f.write("prop-csv");
            let (name, text) = [(PORES, &f.pores), (THROATS, &f.throats), (TOML, &f.toml)][file];
            std::fs::write(dir.join(name), mutate(text, &edits)).unwrap();
            match io::read_network(&dir) {
                Ok(loaded) => prop_assert!(loaded.network.n_pores() > 0),
                Err(e) => prop_assert!(!e.to_string().is_empty()),
            }
            std::fs::remove_dir_all(&dir).unwrap();
        }

        #[test]
        fn arbitrary_bytes_as_any_file_read_ok_or_err(
            file in 0usize..4,
            bytes in proptest::collection::vec(any::<u8>(), 0..300),
        ) {
            let f = Fixture::valid();
            let dir = f.write("prop-bytes");
            let result = if file == 3 {
                let path = dir.join("x.gnet");
                std::fs::write(&path, &bytes).unwrap();
                io::read_network(&path)
            } else {
                std::fs::write(dir.join([PORES, THROATS, TOML][file]), &bytes).unwrap();
                io::read_network(&dir)
            };
            if file == 3 {
                prop_assert!(result.is_err(), "random bytes are not a network");
            }
            std::fs::remove_dir_all(&dir).unwrap();
        }

        #[test]
        fn truncated_or_bit_flipped_binary_is_refused(
            cut in any::<usize>(),
            flip in any::<usize>(),
            bit in 0u8..8,
            truncate in any::<bool>(),
        ) {
            let mut bytes = binary_bytes();
            if truncate {
                bytes.truncate(cut % bytes.len());
            } else {
                let at = flip % bytes.len();
                bytes[at] ^= 1 << bit;
            }
            // Any truncation and any single bit flip must be detected.
            let err = read_bytes("prop-bin", &bytes).expect_err("damaged file accepted");
            prop_assert_eq!(err.violations()[0].rule, Rule::BadBinary);
        }
    }
}

// ------------------------------------------------- wettability column

/// The chain fixture with an `oil_wet` column: pores 1 and 2 marked.
fn with_marks() -> Fixture {
    let f = Fixture::valid();
    let mut pores = String::new();
    for (k, line) in f.pores.lines().enumerate() {
        let cell = match k {
            0 => "oil_wet",
            2 | 3 => "1",
            1 => "0",
            _ => "",
        };
        pores.push_str(&format!("{line},{cell}\n"));
    }
    Fixture { pores, ..f }
}

#[test]
fn oil_wet_column_round_trips_and_changes_the_hash() {
    let loaded = with_marks().read("marks").expect("valid");
    let net = loaded.network;
    assert_eq!(
        net.pores().oil_wet.as_deref(),
        Some(&[false, true, true, false][..])
    );
    assert!(net.throats().oil_wet.is_none());
    // Elements: 4 pores then 3 throats; a file without the column is all
    // water-wet.
    assert_eq!(
        net.oil_wet_marks().unwrap(),
        vec![false, true, true, false, false, false, false]
    );
    let dir = scratch("marks-out");
    io::write_csv(&net, &dir).unwrap();
    let header = std::fs::read_to_string(dir.join(PORES)).unwrap();
    assert!(header.lines().next().unwrap().ends_with(",oil_wet"));
    let again = io::read_network(&dir).unwrap().network;
    assert_eq!(again.pores().oil_wet, net.pores().oil_wet);
    let plain = Fixture::valid().read("no-marks").unwrap().network;
    assert_ne!(io::network_hash(&plain), io::network_hash(&net));
    // The binary format cannot hold the marks: refused, not dropped.
    let err = io::write_binary(&net, &dir.join("net.gnet")).unwrap_err();
    assert!(err.to_string().contains("net.gnet"), "{err}");
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn oil_wet_values_other_than_zero_or_one_are_refused_with_their_line() {
    let f = with_marks().pores_line(4, "2,2e-4,0,0,2e-5,4e-14,0.07,0,,0.5");
    check(
        "marks-bad",
        &f,
        &[(Rule::MalformedValue, PORES, Some(4), Some("oil_wet"))],
    );
}

// ------------------------------------------- generator and study inputs

/// The error text of a generator file holding `body`.
fn spec_error(body: &str) -> String {
    let dir = scratch("spec");
    let p = dir.join("lattice.toml");
    std::fs::write(&p, body).unwrap();
    network_core::io::study::read_lattice_spec(&p)
        .unwrap_err()
        .to_string()
}

#[test]
fn generator_file_errors_name_key_and_line_in_the_words_of_the_file() {
    // Issue 17: "expected struct WeibullRange with 4 elements".
    let e = spec_error("nx = 4\npore_radius = [5e-6, 4e-5, 1.8]\n");
    assert!(e.contains(":2:"), "{e}");
    assert!(e.contains("`pore_radius`"), "{e}");
    assert!(e.contains("min_m, max_m, shape, scale"), "{e}");
    assert!(!e.contains("struct") && !e.contains("WeibullRange"), "{e}");
    // A spacing in µm written in m is refused at its line.
    let e = spec_error("nx = 4\n\nspacing_m = 85\n");
    assert!(e.contains(":3:") && e.contains("spacing_m"), "{e}");
    assert!(e.contains("8.5e-5"), "{e}");
    // The CLI's old spelling in a file.
    let e = spec_error("spacing_um = 85\n");
    assert!(e.contains("spacing_m = 85e-6"), "{e}");
}

#[test]
fn a_missing_relative_network_names_the_resolved_path_and_the_study_line() {
    let dir = scratch("relative");
    let study = dir.join("study.toml");
    std::fs::write(
        &study,
        "title = \"t\"\nnetwork = \"nets/missing\"\n[[process]]\nkind = \"drainage\"\nuntil_pc_pa = 1e4\n",
    )
    .unwrap();
    let s = network_core::io::study::read_study(&study).unwrap();
    let e = network_core::io::study::study_network(&study, &s, 0)
        .unwrap_err()
        .to_string();
    let resolved = dir.join("nets/missing");
    assert!(e.contains(&resolved.display().to_string()), "{e}");
    assert!(e.contains("study.toml:2"), "{e}");
    assert!(
        e.contains("relative to the folder of the study file"),
        "{e}"
    );
}

#[test]
fn issue_18_radii_of_5e_minus_324_and_1e308_are_refused_as_unphysical_with_line() {
    check(
        "radius-subnormal",
        &Fixture::valid().pores_line(3, "1,1e-4,0,0,5e-324,4e-14,0.05,0,"),
        &[(Rule::Unphysical, PORES, Some(3), Some("radius_m"))],
    );
    check(
        "radius-huge",
        &Fixture::valid().throats_line(4, "2,2,3,1e308,0.0625,1e-4,3e-14"),
        &[(Rule::Unphysical, THROATS, Some(4), Some("radius_m"))],
    );
}

#[test]
fn issue_18_pore_volume_of_1e308_is_refused_as_porosity_not_finite_or_above_one() {
    // Two volumes of 1e308 m³ sum to infinity: no porosity at all.
    let f = Fixture::valid()
        .pores_line(2, "0,0,0,0,2e-5,1e308,0.04,0,inlet")
        .pores_line(3, "1,1e-4,0,0,2e-5,1e308,0.05,0,");
    check(
        "volume-overflow",
        &f,
        &[(Rule::Unphysical, PORES, None, Some("volume_m3"))],
    );
    // One volume of 1e308 m³ in a 3e-12 m³ sample: porosity far above 1.
    let f = Fixture::valid().pores_line(3, "1,1e-4,0,0,2e-5,1e308,0.05,0,");
    let err = f.read("volume-huge").unwrap_err().to_string();
    assert!(err.contains("porosity") && err.contains("above 1"), "{err}");
    // Bulk volume 3e-4 m × 1e-8 m² = 3e-12 m³; pore volumes 4 × 4e-14 and
    // throat volumes 3 × 3e-14 sum to 2.5e-13 m³: porosity 0.083. A bulk
    // volume of 2e-13 m³ makes it 1.25.
    check(
        "porosity-above-one",
        &Fixture::valid().toml_line(4, "area_m2 = 1e-8\nbulk_volume_m3 = 2e-13"),
        &[(Rule::Unphysical, PORES, None, Some("volume_m3"))],
    );
    assert!(
        Fixture::valid()
            .toml_line(4, "area_m2 = 1e-8\nbulk_volume_m3 = 2.6e-13")
            .read("porosity-below-one")
            .is_ok()
    );
}

#[test]
fn issue_18_length_m_a_thousand_times_the_pore_extent_is_refused() {
    // The pore centres span 3e-4 m along x.
    check(
        "length-1000-m",
        &Fixture::valid().toml_line(3, "length_m = 1000"),
        &[(Rule::Unphysical, TOML, Some(3), Some("length_m"))],
    );
    check(
        "length-in-um-as-m-the-other-way",
        &Fixture::valid().toml_line(3, "length_m = 3e-8"),
        &[(Rule::Unphysical, TOML, Some(3), Some("length_m"))],
    );
    // A factor 100 is left to the run's warning.
    assert!(
        Fixture::valid()
            .toml_line(3, "length_m = 3e-2")
            .read("length-warned")
            .is_ok()
    );
}

#[test]
fn issue_18_one_unterminated_quote_in_pores_csv_is_reported_once_with_its_cascade_in_one_line() {
    let f = Fixture::valid().pores_line(3, "1,\"1e-4,0,0,2e-5,4e-14,0.05,0,");
    let err = f.read("quote").unwrap_err();
    let v = err.violations();
    let missing: Vec<_> = v.iter().filter(|x| x.rule == Rule::MissingPore).collect();
    assert_eq!(missing.len(), 1, "{err}");
    assert!(missing[0].detail.contains("follow from"), "{err}");
    let malformed = v
        .iter()
        .filter(|x| x.file.as_deref().is_some_and(|f| f.ends_with(PORES)))
        .filter(|x| matches!(x.rule, Rule::MalformedRow | Rule::MalformedValue))
        .count();
    assert_eq!(malformed, 1, "{err}");
    assert!(v.len() <= 4, "{err}");
}

#[test]
fn issue_18_many_throats_naming_missing_pores_are_listed_up_to_five_then_summarised() {
    // Ten throats from pore 3 to pores 10..19 that do not exist.
    let mut throats = Fixture::valid().throats;
    for k in 0..10 {
        throats += &format!("{},3,{},1e-5,0.0625,1e-4,3e-14\n", 3 + k, 10 + k);
    }
    let f = Fixture {
        throats,
        ..Fixture::valid()
    };
    let err = f.read("many-missing").unwrap_err();
    let missing: Vec<_> = err
        .violations()
        .iter()
        .filter(|x| x.rule == Rule::MissingPore)
        .collect();
    assert_eq!(missing.len(), 6, "{err}");
    assert!(missing[5].detail.starts_with("5 more throat ends"), "{err}");
    assert_eq!(missing[5].line, Some(10), "{err}");
}

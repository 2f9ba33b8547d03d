//! Fuzzing the text readers on the stable toolchain: mutated study, sweep
//! and generator files and random result-folder manifests must give a value
//! or a typed error, never a panic. The network readers (`io.rs`,
//! `never_panics`) and the image readers (`image.rs`, `never_panics_on_…`)
//! have properties of their own that take the same variable. A bounded number of cases runs with
//! `cargo test`; for a long run set `GANGLION_FUZZ_CASES`, e.g.
//!
//! ```text
//! GANGLION_FUZZ_CASES=200000 cargo test --release -p network-core --test it -- fuzz never_panics
//! ```
//!
//! A crash found becomes a regression test named for it (`issue_<n>_…`).

use network_core::generate::LatticeSpec;
use network_core::io::result_set::{MANIFEST_NAME, verify};
use network_core::study::Study;
use network_core::sweep::SweepStudy;
use proptest::prelude::*;
use proptest::test_runner::{Config, RngSeed};

/// Cases per property: 64 by default, `GANGLION_FUZZ_CASES` for long runs.
fn config() -> Config {
    let cases = std::env::var("GANGLION_FUZZ_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(64);
    Config {
        cases,
        rng_seed: RngSeed::Fixed(0x6675_7a7a),
        failure_persistence: None,
        ..Config::default()
    }
}

const STUDY: &str = r#"network = "net"
seed = 7
[fluids]
interfacial_tension_n_per_m = 0.030
water_viscosity_pa_s = 1.0e-3
[wettability]
receding_contact_angle_deg = [0.0, 20.0]
advancing_contact_angle_deg = [30.0, 50.0]
oil_wet_fraction = 0.5
[[process]]
kind = "drainage"
until_pc_pa = 2.0e4
kr_points = 5
[[process]]
kind = "imbibition"
until_sw = 0.9
[sweep]
initial_water_saturations = [0.8, 0.4]
realisations = 2
[sweep.parameters]
"fluids.interfacial_tension_n_per_m" = [0.02, 0.03]
"#;

const GENERATOR: &str = "nx = 6\nny = 5\nnz = 4\nspacing_m = 1e-4\n\
                         target_coordination = 4.0\nseed = 3\nclay_fraction = 0.1\n";

/// Applies `edits` (position, action, byte) to `text`: action 0 removes
/// the byte at the position, 1 inserts a character of `alphabet`, 2 replaces
/// the byte by one. Shared by every mutation-based property of the crate.
pub fn mutate_with(text: &str, edits: &[(usize, u8, u8)], alphabet: &[u8]) -> Vec<u8> {
    let mut bytes = text.as_bytes().to_vec();
    for &(pos, action, byte) in edits {
        let c = alphabet[byte as usize % alphabet.len()];
        let at = if bytes.is_empty() {
            0
        } else {
            pos % bytes.len()
        };
        match action % 3 {
            0 if !bytes.is_empty() => {
                bytes.remove(at);
            }
            1 => bytes.insert(at, c),
            _ if !bytes.is_empty() => bytes[at] = c,
            _ => bytes.push(c),
        }
    }
    bytes
}

/// [`mutate_with`] with the characters TOML and numbers are made of.
fn mutate(text: &str, edits: &[(usize, u8, u8)]) -> String {
    const ALPHABET: &[u8] = b"0123456789.,-+eE\n\"[]=_ aiknfx#";
    String::from_utf8_lossy(&mutate_with(text, edits, ALPHABET)).into_owned()
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn mutated_study_and_sweep_files_parse_or_give_errors(
        edits in proptest::collection::vec((any::<usize>(), any::<u8>(), any::<u8>()), 1..10),
    ) {
        let text = mutate(STUDY, &edits);
        if let Err(e) = Study::parse(&text) {
            prop_assert!(!e.to_string().is_empty());
        }
        match SweepStudy::parse(&text) {
            // Lazily: the first few cases only, the count may be large.
            Ok(s) => prop_assert!(s.cases().iter().take(4).all(|c| c.realisation < 10_000)),
            Err(e) => prop_assert!(!e.to_string().is_empty()),
        }
    }

    #[test]
    fn mutated_generator_files_parse_or_give_errors(
        edits in proptest::collection::vec((any::<usize>(), any::<u8>(), any::<u8>()), 1..10),
    ) {
        let text = mutate(GENERATOR, &edits);
        let dir = std::env::temp_dir().join(format!("ganglion-fuzz-gen-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("lattice.toml");
        std::fs::write(&path, &text).unwrap();
        if let Ok(spec) = network_core::io::study::read_lattice_spec(&path) {
            let _: &LatticeSpec = &spec;
            prop_assert!(spec.n_pores() > 0 || spec.validate().is_err());
        }
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn random_manifests_never_verify_a_folder_as_complete_by_accident(
        text in "[ -~\n]{0,200}",
        listed in any::<bool>(),
    ) {
        let dir = std::env::temp_dir().join(format!("ganglion-fuzz-set-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::write(dir.join("summary.json"), "{}").unwrap();
        let body = if listed {
            format!(
                "{{\"format\":\"ganglion result set\",\"version\":1,\"kind\":\"run\",\"complete\":true,\
                 \"files\":[{{\"path\":{:?},\"bytes\":2,\"crc32\":\"00000000\"}}]}}",
                text
            )
        } else {
            text.clone()
        };
        std::fs::write(dir.join(MANIFEST_NAME), body).unwrap();
        // A manifest that does not parse is an error; one that parses never
        // matches the folder (the checksum of "{}" is not 0).
        if let Ok(v) = verify(&dir) {
            prop_assert!(!v.is_complete(), "{v:?}");
        }
        std::fs::remove_dir_all(&dir).unwrap();
    }
}

//! Memory estimates of the commands, made before they allocate, so a
//! network too large for the machine is refused with both figures instead
//! of ending in an allocation failure.
//!
//! An estimate has four parts, each linear in the pore and throat counts
//! (bytes):
//!
//! - **network**: the columns and the adjacency, `70 n_p + 80 n_t`: per
//!   pore 8 doubles and a boundary byte (65 B) plus the CSR offsets, per
//!   throat 7 doubles and two `u32` ends (64 B) plus two adjacency entries
//!   of 8 B — derived from the layout of [`crate::Network`];
//! - **engine**: occupancy state, thresholds, contact angles and the
//!   saturation bookkeeping of a run;
//! - **solver**: the pressure system and its multigrid hierarchy;
//! - **outputs**: the largest result held in memory while written (a 3-D
//!   state file).
//!
//! The engine, solver and output coefficients are calibrated on measured
//! peaks (`VmHWM`) of `ganglion generate`, `perm` and `run` on lattices of
//! 10⁴ and 10⁵ pores (coordination about 4; see the test
//! `issue_18_memory_estimate_is_within_a_factor_two_of_the_measured_peak`
//! in `network-cli/tests/cli.rs`), plus a fixed 8 MiB for the program
//! itself. They are estimates: the test holds them within a factor 2 of
//! the measured peak.

/// What a command is estimated to need, bytes, by part.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Estimate {
    /// The program itself (code, thread stacks, small buffers).
    pub base: u64,
    /// The network's columns and adjacency.
    pub network: u64,
    /// Working memory of the generator or the displacement engine.
    pub engine: u64,
    /// The pressure system and its multigrid hierarchy.
    pub solver: u64,
    /// The largest output held in memory while written.
    pub outputs: u64,
}

impl Estimate {
    /// The sum of the parts, bytes (saturating).
    pub fn total(&self) -> u64 {
        self.base
            .saturating_add(self.network)
            .saturating_add(self.engine)
            .saturating_add(self.solver)
            .saturating_add(self.outputs)
    }
}

/// Fixed memory of the program, bytes.
pub const BASE_BYTES: u64 = 8 << 20;

/// Bytes of a network's columns and adjacency (see the module docs).
pub fn network_bytes(n_pores: u64, n_throats: u64) -> u64 {
    n_pores
        .saturating_mul(70)
        .saturating_add(n_throats.saturating_mul(80))
}

/// `ganglion generate` of a lattice of `n_pores` with `n_bonds` lattice
/// bonds of which `n_throats` are kept: the network plus the generator's
/// bond list and scratch (about 20 B per lattice bond, 60 B per pore) and
/// the encoded file.
pub fn for_generate(n_pores: u64, n_bonds: u64, n_throats: u64) -> Estimate {
    Estimate {
        base: BASE_BYTES,
        network: network_bytes(n_pores, n_throats),
        engine: n_bonds
            .saturating_mul(20)
            .saturating_add(n_pores.saturating_mul(60)),
        solver: 0,
        outputs: network_bytes(n_pores, n_throats),
    }
}

/// `ganglion perm`: the network, the pressure system and its hierarchy
/// (about 450 B per pore and 60 B per throat).
pub fn for_perm(n_pores: u64, n_throats: u64) -> Estimate {
    Estimate {
        base: BASE_BYTES,
        network: network_bytes(n_pores, n_throats),
        engine: 0,
        solver: n_pores
            .saturating_mul(450)
            .saturating_add(n_throats.saturating_mul(60)),
        outputs: 0,
    }
}

/// `ganglion run`: the network, the engine (about 300 B per element), one
/// pressure system at a time (as [`for_perm`]) and one 3-D state file
/// (about 100 B per pore).
pub fn for_run(n_pores: u64, n_throats: u64) -> Estimate {
    let perm = for_perm(n_pores, n_throats);
    Estimate {
        engine: n_pores.saturating_add(n_throats).saturating_mul(300),
        outputs: n_pores.saturating_mul(100),
        ..perm
    }
}

/// Why a command was refused before it allocated.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
#[error(
    "{what} needs about {} of memory (network {}, working memory {}, solver {}, outputs {}) \
     but {} is available ({source_of_limit}); {hint}",
    mb(estimate.total()),
    mb(estimate.network),
    mb(estimate.engine),
    mb(estimate.solver),
    mb(estimate.outputs),
    mb(*available)
)]
pub struct MemoryError {
    /// What was estimated ("a lattice of 894x894x894 pores", …).
    pub what: String,
    /// The estimate.
    pub estimate: Estimate,
    /// Bytes available.
    pub available: u64,
    /// Where the figure comes from (`MemAvailable`, a cgroup limit, …).
    pub source_of_limit: String,
    /// What to do about it.
    pub hint: String,
}

/// `bytes` in MB (10⁶ B) with one decimal, or GB above 10 GB.
pub fn mb(bytes: u64) -> String {
    if bytes >= 10_000_000_000 {
        format!("{:.1} GB", bytes as f64 / 1e9)
    } else {
        format!("{:.1} MB", bytes as f64 / 1e6)
    }
}

/// Refuses `estimate` when it exceeds `available` bytes.
pub fn check(
    what: &str,
    estimate: Estimate,
    available: Option<(u64, String)>,
    hint: &str,
) -> Result<(), MemoryError> {
    match available {
        Some((avail, source)) if estimate.total() > avail => Err(MemoryError {
            what: what.to_owned(),
            estimate,
            available: avail,
            source_of_limit: source,
            hint: hint.to_owned(),
        }),
        _ => Ok(()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn estimates_grow_linearly_and_saturate_instead_of_overflowing() {
        let a = for_run(1000, 2000).total() - BASE_BYTES;
        let b = for_run(2000, 4000).total() - BASE_BYTES;
        assert_eq!(2 * a, b);
        assert_eq!(for_generate(u64::MAX, u64::MAX, u64::MAX).total(), u64::MAX);
    }

    #[test]
    fn check_refuses_above_the_available_memory_with_both_figures() {
        let e = for_generate(894 * 894 * 894, 3 * 894 * 894 * 894, 2 * 894 * 894 * 894);
        let err = check(
            "a lattice",
            e,
            Some((8_000_000_000, "test".into())),
            "smaller",
        )
        .unwrap_err()
        .to_string();
        assert!(err.contains("8000.0 MB is available"), "{err}");
        assert!(err.contains(&mb(e.total())), "{err}");
        assert!(check("a lattice", e, None, "").is_ok());
        assert!(
            check(
                "tiny",
                for_generate(8, 12, 10),
                Some((1 << 30, "t".into())),
                ""
            )
            .is_ok()
        );
    }
}

//! Saturation-function tables: a simulated curve made monotone and
//! resampled, written as CSV or as a water–oil saturation-function keyword
//! table, and read back.
//!
//! ## From a simulated curve to a table ([`build_table`])
//! A [`Curve`] holds `(Sw, krw, krn, Pc)` samples in process order
//! (drainage: Sw falling; imbibition: Sw rising). Simulated curves can be
//! slightly noisy or non-monotone (finite networks, trapping events), while
//! a reservoir simulator needs monotone tables. The steps, in order:
//!
//! 1. **Check** lengths (all equal, at least 2), finite values, `Sw ∈ [0, 1]`.
//! 2. **Sort** by increasing Sw (tables always run in increasing Sw; the
//!    process is kept only as a label). Steps of Sw against the process
//!    direction are counted in [`TableReport::n_sw_reversals`].
//! 3. **Merge** samples with equal Sw into one knot carrying their mean
//!    values and weight equal to their count.
//! 4. **Make monotone** by weighted isotonic regression, the
//!    pool-adjacent-violators algorithm ([`isotonic_non_decreasing`];
//!    Ayer et al. 1955, Ann. Math. Stat. 26:641–647; Barlow et al. 1972,
//!    *Statistical Inference under Order Restrictions*, Wiley): `krw`
//!    non-decreasing in Sw, `krn` and `Pc` non-increasing in Sw. It is the
//!    least-squares closest monotone sequence, so it changes only the
//!    violating stretches. Negative kr (solver round-off) are then raised to
//!    0, which keeps monotonicity.
//! 5. **End points.** The table spans exactly the sampled Sw range:
//!    `Sw_min` (drainage: Swc, the lowest Sw reached; imbibition: Swi, the
//!    start) to `Sw_max` (drainage: the starting Sw, normally 1; imbibition:
//!    1 − Snr, the highest Sw reached). Both are copied bit for bit from the
//!    data. Values at the ends are the monotone values there, no
//!    extrapolation, except:
//!    - `krn(Sw_max) = 0` when [`TableOptions::krn_zero_at_max_sw`] (default
//!      `true`): at the top of the table the non-wetting phase is residual
//!      (1 − Snr) or absent (Sw = 1) and does not flow.
//!    - `krw(Sw_min) = 0` when [`TableOptions::krw_zero_at_min_sw`] (default
//!      `false`: in angular pores the wetting phase at Swc stays connected
//!      through corner films and keeps a small conductance; set it when the
//!      wetting phase is disconnected there).
//!
//!    Both keep the columns monotone.
//! 6. **Resample** at `n_points` Sw values evenly spaced between the ends,
//!    by linear interpolation of the monotone knots (which preserves
//!    monotonicity).
//!
//! How much each step changed the data is reported in [`TableReport`],
//! measured at the original samples.
//!
//! ## Files
//! - CSV ([`write_csv`], [`parse_csv`]): header `sw,krw,krn,pc_pa`, numbers
//!   in shortest round-trip form (read back bit-exact).
//! - Keyword table ([`write_keyword_table`], [`parse_keyword_table`]): the
//!   four-column layout black-oil reservoir simulators read as a water–oil
//!   saturation function (keyword `SWOF` by default): columns Sw, krw, krow
//!   (oil relative permeability in the presence of water, here `krn`) and
//!   `Pc = Po − Pw` in bar, comment lines starting with `--`, the table
//!   ended by `/`. Sw with 6 decimals, the others with 7 significant digits.
//!
//! ## Files
//! This file holds the table types. [`build_table`] is in `build` (with the
//! regression in `isotonic`); the file formats are `csv_file` and
//! `keyword_file`, sharing row checks and number text in `file_rows`;
//! [`from_run`] makes the tables of a study run.

pub use self::build::build_table;
pub use self::csv_file::{CSV_HEADER, parse_csv, write_csv};
pub use self::isotonic::{isotonic_non_decreasing, isotonic_non_increasing};
pub use self::keyword_file::{
    KeywordTable, KeywordTableOptions, declared_units, parse_keyword_columns, parse_keyword_table,
    write_gas_water_tables, write_keyword_table,
};
pub use crate::error::TableError;

mod build;
mod csv_file;
mod file_rows;
pub mod from_run;
mod isotonic;
mod keyword_file;

/// Pascals per bar.
pub const PA_PER_BAR: f64 = 1.0e5;

/// The displacement process a curve comes from.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Process {
    /// Drainage: the non-wetting phase invades, Sw falls.
    Drainage,
    /// Imbibition: the wetting phase invades, Sw rises.
    Imbibition,
}

impl Process {
    /// Lower-case name.
    pub fn as_str(self) -> &'static str {
        match self {
            Process::Drainage => "drainage",
            Process::Imbibition => "imbibition",
        }
    }
}

/// A simulated saturation-function curve, samples in process order.
#[derive(Clone, Copy, Debug)]
pub struct Curve<'a> {
    /// The process, which fixes the expected direction of Sw.
    pub process: Process,
    /// Water (wetting) saturation, fraction of pore volume.
    pub sw: &'a [f64],
    /// Wetting relative permeability (–).
    pub krw: &'a [f64],
    /// Non-wetting relative permeability (–).
    pub krn: &'a [f64],
    /// Capillary pressure `Po − Pw` (Pa).
    pub pc_pa: &'a [f64],
}

/// Options of [`build_table`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TableOptions {
    /// Number of table rows (≥ 2; with [`rows_at_samples`](Self::rows_at_samples)
    /// the most rows, before the row [`extend_to_sw_one`](Self::extend_to_sw_one)
    /// adds). Default 21.
    pub n_points: usize,
    /// Set `krw = 0` at the lowest Sw. Default `false`.
    pub krw_zero_at_min_sw: bool,
    /// Set `krn = 0` at the highest Sw. Default `true`.
    pub krn_zero_at_max_sw: bool,
    /// Rows at simulated samples, Pc only simulated values: equal-Sw
    /// samples keep the Pc of the first in process order (where that Sw was
    /// reached), Pc is made monotone by a running minimum from low Sw (every
    /// value stays one that was simulated), and the rows are the knots
    /// nearest to `n_points` evenly spaced Sw (no interpolation). Default
    /// `false`: Pc pooled by isotonic regression and rows interpolated on an
    /// even grid.
    pub rows_at_samples: bool,
    /// When the curve ends below Sw = 1, add a row at Sw = 1 with `krw` at
    /// its end point (the value at the highest simulated Sw), `krn = 0` and
    /// Pc held at its value there; a last Sw within 1e-9 of 1 (round-off)
    /// becomes 1 instead. Default `false`.
    pub extend_to_sw_one: bool,
    /// Pc (Pa) at the highest Sw, replacing the sampled value before Pc is
    /// made monotone: a drainage's entry pressure, so that the table keeps
    /// it at Sw = 1 instead of the 0 of the starting state. Default `None`.
    pub pc_at_max_sw: Option<f64>,
}

impl Default for TableOptions {
    fn default() -> Self {
        TableOptions {
            n_points: 21,
            krw_zero_at_min_sw: false,
            krn_zero_at_max_sw: true,
            rows_at_samples: false,
            extend_to_sw_one: false,
            pc_at_max_sw: None,
        }
    }
}

impl TableOptions {
    /// The conventions reservoir simulators expect (common practice): at
    /// most `n_points` rows at simulated samples, `krw = 0` at the lowest
    /// Sw (connate water), `krn = 0` at the highest, a row at Sw = 1, and
    /// `pc_at_max_sw` at the top (the drainage entry pressure).
    pub fn for_simulators(n_points: usize, pc_at_max_sw: Option<f64>) -> TableOptions {
        TableOptions {
            n_points,
            krw_zero_at_min_sw: true,
            krn_zero_at_max_sw: true,
            rows_at_samples: true,
            extend_to_sw_one: true,
            pc_at_max_sw,
        }
    }
}

/// The unit of capillary pressure in keyword tables.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub enum TableUnits {
    /// bar (the unit of the METRIC deck unit system). Default.
    #[default]
    Bar,
    /// kPa (no common deck unit system uses it: convert before including).
    Kpa,
    /// psi (the unit of the FIELD deck unit system).
    Psi,
}

impl TableUnits {
    /// Pascals per unit: bar 1e5 (definition), kPa 1e3, psi
    /// 0.45359237 kg · 9.80665 m/s² / (0.0254 m)² = 6894.757293168361 Pa
    /// (definitions of the avoirdupois pound, standard gravity and the inch).
    pub fn pa_per_unit(self) -> f64 {
        match self {
            TableUnits::Bar => PA_PER_BAR,
            TableUnits::Kpa => 1.0e3,
            TableUnits::Psi => 0.453_592_37 * 9.806_65 / (0.0254 * 0.0254),
        }
    }

    /// The unit as written in files and accepted by `--table-units`.
    pub fn as_str(self) -> &'static str {
        match self {
            TableUnits::Bar => "bar",
            TableUnits::Kpa => "kPa",
            TableUnits::Psi => "psi",
        }
    }

    /// Parses `bar`, `kpa` or `psi` (any case).
    pub fn parse(s: &str) -> Option<TableUnits> {
        match s.to_ascii_lowercase().as_str() {
            "bar" => Some(TableUnits::Bar),
            "kpa" => Some(TableUnits::Kpa),
            "psi" => Some(TableUnits::Psi),
            _ => None,
        }
    }

    /// The deck unit system whose pressure unit this is, if any.
    pub fn deck_unit_system(self) -> Option<&'static str> {
        match self {
            TableUnits::Bar => Some("METRIC"),
            TableUnits::Kpa => None,
            TableUnits::Psi => Some("FIELD"),
        }
    }
}

/// Rows of a saturation-function table, increasing in Sw.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct TableRows {
    /// Water saturation (fraction), strictly increasing.
    pub sw: Vec<f64>,
    /// Wetting relative permeability (–), non-decreasing.
    pub krw: Vec<f64>,
    /// Non-wetting relative permeability (–), non-increasing.
    pub krn: Vec<f64>,
    /// Capillary pressure (Pa), non-increasing.
    pub pc_pa: Vec<f64>,
}

impl TableRows {
    /// Number of rows.
    pub fn len(&self) -> usize {
        self.sw.len()
    }

    /// Whether there are no rows.
    pub fn is_empty(&self) -> bool {
        self.sw.is_empty()
    }
}

/// How much one column was changed, measured at the original samples
/// (final monotone value, before resampling, minus the input value).
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct Adjustment {
    /// Samples whose value changed.
    pub n_changed: usize,
    /// Largest absolute change.
    pub max_abs_change: f64,
    /// Root-mean-square change over all samples.
    pub rms_change: f64,
}

/// What [`build_table`] did to the data.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct TableReport {
    /// Steps of Sw against the process direction in the input.
    pub n_sw_reversals: usize,
    /// Samples merged into an equal-Sw neighbour.
    pub n_merged: usize,
    /// Change of krw (isotonic regression, clamping, end point).
    pub krw: Adjustment,
    /// Change of krn (isotonic regression, clamping, end point).
    pub krn: Adjustment,
    /// Change of Pc (isotonic regression), in Pa.
    pub pc_pa: Adjustment,
}

/// A monotone, resampled saturation-function table.
#[derive(Clone, Debug, PartialEq)]
pub struct SatTable {
    /// The process the curve came from.
    pub process: Process,
    /// The rows.
    pub rows: TableRows,
    /// What was changed to make the rows monotone.
    pub report: TableReport,
}

#[cfg(test)]
mod tests;

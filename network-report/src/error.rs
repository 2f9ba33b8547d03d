//! The error types of the crate, in one module that uses no other module
//! of the crate, so every module can name them and the dependencies run one
//! way: [`PlotError`] (drawing a figure), [`TableError`] (building, writing
//! or reading a saturation-function table), [`VtkError`] (writing a 3-D
//! state) and [`ReportError`], which wraps them with the name of the file
//! that could not be made. Each is also re-exported by the module it belongs
//! to ([`plot`](crate::plot),
//! [`saturation_tables`](mod@crate::saturation_tables),
//! [`vtk`](crate::vtk), [`artifacts`](crate::artifacts)).

use std::path::PathBuf;

use thiserror::Error;

/// Why a report file could not be made or written; every variant names
/// the file.
#[non_exhaustive]
#[derive(Debug, Error)]
pub enum ReportError {
    /// The output folder could not be created, or a file not written.
    #[error("cannot write {}: {source}", path.display())]
    Io {
        /// The folder or file.
        path: PathBuf,
        /// The cause.
        source: std::io::Error,
    },
    /// A figure could not be drawn.
    #[error("figure {file}: {source}")]
    Plot {
        /// File name of the figure.
        file: String,
        /// The cause.
        source: PlotError,
    },
    /// A table could not be built or written.
    #[error("table {file}: {source}")]
    Table {
        /// File name of the table.
        file: String,
        /// The cause.
        source: TableError,
    },
    /// A 3-D state could not be written.
    #[error("3-D state {file}: {source}")]
    Vtk {
        /// File name of the state.
        file: String,
        /// The cause.
        source: VtkError,
    },
    /// The result folder could not be staged, sealed or moved into place
    /// (including a refused target folder).
    #[error(transparent)]
    Set(#[from] network_core::io::result_set::SetError),
}

/// Why a plot could not be rendered.
#[non_exhaustive]
#[derive(Clone, Debug, PartialEq, Error)]
pub enum PlotError {
    /// A series has different numbers of x and y values.
    #[error("series {series:?}: {x_len} x values but {y_len} y values")]
    LengthMismatch {
        /// Series label.
        series: String,
        /// Number of x values.
        x_len: usize,
        /// Number of y values.
        y_len: usize,
    },
    /// A band's bounds do not match the series length.
    #[error(
        "series {series:?}: band has {lower_len} lower and {upper_len} upper values for {x_len} points"
    )]
    BandLengthMismatch {
        /// Series label.
        series: String,
        /// Number of x values.
        x_len: usize,
        /// Number of lower bounds.
        lower_len: usize,
        /// Number of upper bounds.
        upper_len: usize,
    },
    /// A fixed axis range is empty, non-finite, or not positive on a log axis.
    #[error("{axis} range [{min}, {max}] is invalid: {reason}")]
    InvalidRange {
        /// `"x"` or `"y"`.
        axis: &'static str,
        /// Range start.
        min: f64,
        /// Range end.
        max: f64,
        /// What is wrong.
        reason: &'static str,
    },
    /// The canvas is too small to draw on.
    #[error("canvas {width}×{height} px is too small (at least 64×64)")]
    InvalidSize {
        /// Width in pixels.
        width: u32,
        /// Height in pixels.
        height: u32,
    },
    /// The embedded font could not be loaded.
    #[error("the embedded font could not be registered")]
    Font,
    /// The drawing backend failed.
    #[error("drawing failed: {0}")]
    Render(String),
    /// PNG encoding failed.
    #[error("PNG encoding failed: {0}")]
    Encode(String),
}

/// Why a table could not be built, written or read.
#[non_exhaustive]
#[derive(Clone, Debug, PartialEq, Error)]
pub enum TableError {
    /// A column's length differs from the Sw column's.
    #[error("column {column} has {found} values, Sw has {expected}")]
    LengthMismatch {
        /// Column name.
        column: &'static str,
        /// Length of Sw.
        expected: usize,
        /// Length of this column.
        found: usize,
    },
    /// Fewer points than needed.
    #[error("{what}: {found} points, at least {needed} needed")]
    TooFewPoints {
        /// What was being built or read.
        what: &'static str,
        /// Points found.
        found: usize,
        /// Points needed.
        needed: usize,
    },
    /// A value is NaN or infinite.
    #[error("{column}[{index}] = {value} is not finite")]
    NotFinite {
        /// Column name.
        column: &'static str,
        /// Row index (0-based).
        index: usize,
        /// The value.
        value: f64,
    },
    /// A value is outside its allowed range.
    #[error("{column}[{index}] = {value} is outside {allowed}")]
    OutOfRange {
        /// Column name.
        column: &'static str,
        /// Row index (0-based).
        index: usize,
        /// The value.
        value: f64,
        /// The allowed range.
        allowed: &'static str,
    },
    /// Every sample has the same Sw: no table can span it.
    #[error("all samples have Sw = {sw}: the table has no Sw range")]
    NoSwRange {
        /// The common Sw.
        sw: f64,
    },
    /// Sw does not increase strictly from row to row (after formatting, for
    /// writers).
    #[error("Sw does not increase strictly at row {index} (Sw = {sw})")]
    SwNotIncreasing {
        /// Row index (0-based).
        index: usize,
        /// The offending Sw.
        sw: f64,
    },
    /// An option is invalid.
    #[error("option {name}: {detail}")]
    BadOption {
        /// Option name.
        name: &'static str,
        /// What is wrong.
        detail: String,
    },
    /// A file does not parse.
    #[error("line {line}: {detail}")]
    Parse {
        /// 1-based line number.
        line: usize,
        /// What is wrong.
        detail: String,
    },
}

/// Why a state cannot be written.
#[non_exhaustive]
#[derive(Clone, Debug, PartialEq, Eq, Error)]
pub enum VtkError {
    /// An input column does not have one value per element (or per pore).
    #[error("{what} has {found} values, the network needs {expected}")]
    LengthMismatch {
        /// Which column.
        what: &'static str,
        /// Values needed.
        expected: usize,
        /// Values given.
        found: usize,
    },
}

//! Tables: reading CSV, TSV and Parquet (polars), pulling typed columns out with errors that
//! name file, row and column, and writing CSV/Parquet atomically with provenance.

pub mod blocks;
pub mod columns;
pub mod error;
pub mod guard;
pub mod layout;
pub mod plausibility;
pub mod provenance;
pub mod read;
pub mod summary;
pub mod write;

pub use columns::{
    CellNumberError, MAX_ABS_CELL, MIN_UNCERTAINTY, check_uncertainty, float_column, map_text_cells,
    measured_number_column, optional_float_column, parse_cell_number, text_column,
};
pub use error::TableError;
pub use provenance::Provenance;
pub use read::{TableFormat, read_table};
pub use summary::{SCHEMA_VERSION, Summary};
pub use write::{refuse_overwriting_inputs, write_table};

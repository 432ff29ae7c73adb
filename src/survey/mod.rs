//! # survey — light curves from tables, one-call period searches, and survey batches
//!
//! The glue between tables and the search-stage science: [`input`] pulls a light curve out
//! of a table (times as two-part BJD_TDB instants, values, uncertainties, bands) and ties
//! every search error back to the file row and column; [`search`] runs a periodogram,
//! its peaks and significance in one call; [`cascade`] describes a light curve by every
//! model in turn and gives it a class, [`cascade_table`] turns a field's descriptions into
//! its per-source rows and columns; [`false_alarm`] carries single-trial probabilities
//! over trials and sources; [`batch`] streams a table of many light curves keyed by a
//! source id, searches each in parallel, and reports bad sources without stopping. No
//! terminal I/O here: the CLI drives these and prints.

pub mod batch;
pub mod cascade;
pub mod cascade_table;
pub mod false_alarm;
pub mod input;
pub mod load;
pub mod report;
pub mod search;

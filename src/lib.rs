//! # skyclock
//!
//! Timing periodic astronomical sources: arrival times from any clock and any site are put
//! on one scale at the solar-system barycentre (BJD_TDB); later stages search for periods
//! and measure timings against ephemerides.

pub mod arrival;
pub mod cli;
pub mod config;
pub mod demo;
pub mod table;
pub mod ephemeris;
pub mod observer;
pub mod time;

pub mod fit;
pub mod periodogram;
pub mod fold;
pub mod frequencies;
pub mod survey;
pub mod plot;
pub mod report;
pub mod pulsar;
pub mod oc;
pub mod predict;
pub mod minima;

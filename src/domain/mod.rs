//! Application rules between the records and the numerical core: the
//! coefficient forms a certificate may carry, parsing of readings pasted or
//! uploaded as text, and whether equipment may be used on a date.
//! No SQL and no HTTP here.

pub mod certificates;
pub mod coefficients;
pub mod history;
pub mod readings;
pub mod results;
pub mod switches;

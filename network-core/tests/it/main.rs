//! Integration tests of network-core, one binary: one module per area, and
//! the small test networks they share in [`networks`].

// Index loops over parallel columns read better than zipped iterators.
#![allow(clippy::needless_range_loop)]

mod accounting;
mod angle_fit;
mod calibrate;
mod clay;
mod drainage;
mod flow;
mod flow_emt;
mod fuzz;
mod generate;
mod image;
mod imbibition;
mod input_checks;
mod io;
mod irregular;
mod micp;
mod mixed_wet;
mod networks;
mod profiles;
mod relperm;

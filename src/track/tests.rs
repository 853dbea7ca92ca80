//! Unit tests of the tracker's internals; behaviour on signals is tested in
//! tests/track.rs.

use super::*;

//! Tessitura: where a part sits over the time actually sung.

//! The one integration-test binary; each file is a module.

mod physics_reference;

//! The bundled demo recording (being built).

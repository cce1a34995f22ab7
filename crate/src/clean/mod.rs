//! Cleaning of measured vector fields: outlier detection and gap filling.

//! The integration tests, one binary: one module per subject (the file names
//! say which), helpers in `support`. Run one module with
//! `cargo test --release --test it -- solver_invariants::`.
#![allow(clippy::unwrap_used)]

mod support;

mod architecture_layers;
mod batch_changes;
mod batch_compare;
mod batch_errors;
mod batch_resume;
mod batch_script;
mod batch_shards;
mod behaviour_kept;
mod cli_bring_your_own;
mod cli_files;
mod cli_main_job;
mod cohort_cli;
mod cohort_mapping;
mod cohort_reference;
mod cohort_simulation;
mod dictionary_atoms;
mod dictionary_errors;
mod dictionary_model;
mod dictionary_profiles;
mod dipole_cli;
mod dipole_fit;
mod forward_leadfield;
mod fuzz_readers;
mod geometry_geodesic;
mod geometry_mesh;
mod geometry_sampling;
mod geometry_validate;
mod head_series;
mod head_spheres;
mod io_gifti;
mod io_hdf5;
mod io_kernel_file;
mod io_npy;
mod io_ply_off;
mod io_result_file;
mod montage_electrodes_io;
mod montage_matching;
mod montage_standard;
mod patterns_haufe;
mod python_package;
mod reliability_cache;
mod reliability_exit_codes;
mod reliability_limits;
mod reliability_outputs;
mod reliability_pipes;
mod reliability_readers;
mod render_charts;
mod render_colormap;
mod render_cortex;
mod render_spline;
mod render_topomap;
mod report_browser;
mod report_compare;
mod report_html;
mod solver_invariants;
mod solver_reference;
mod solver_warm_start;
mod template;
mod trust_answer;
mod validation_recovery;
mod validation_trained_decoders;

//! Label comparison: case-insensitive, with the temporal aliases of the 10-10 nomenclature.

/// The temporal electrodes renamed by the 10-10 nomenclature (Chatrian, Lettich & Nelson
/// 1985; American Electroencephalographic Society 1994): old 10-20 name, new name.
pub const TEMPORAL_ALIASES: [(&str, &str); 4] =
    [("t3", "t7"), ("t4", "t8"), ("t5", "p7"), ("t6", "p8")];

/// The key under which a label is compared: trimmed, lower case, old temporal names
/// mapped to the new ones (T3 → T7, T4 → T8, T5 → P7, T6 → P8).
pub fn canonical_label(label: &str) -> String {
    let lower = label.trim().to_lowercase();
    for (old, new) in TEMPORAL_ALIASES {
        if lower == old {
            return new.to_string();
        }
    }
    lower
}

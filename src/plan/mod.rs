//! Plans: the TOML file as written, validated, and resolved. (Being built.)

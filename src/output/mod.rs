//! Frame-table formats: CSV, binary, compact, C header (in progress).

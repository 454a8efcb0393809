//! Weather ingest: our CSV format, validation errors, repairs.

//! Parsers (placeholder).

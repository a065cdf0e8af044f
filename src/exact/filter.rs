//! Fast exact evaluation of cycle filters (placeholder).

//! The SDK for plugin authors (being written).

"""The study: schema, vocabulary, readers (TOML with units -> SI dataclasses)."""

"""Bandsketch desktop application (Qt): views and editing commands over the engine's document."""

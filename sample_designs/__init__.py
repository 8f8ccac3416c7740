"""The sample designs that ship with Bandsketch (invented scenarios; JSON design files)."""

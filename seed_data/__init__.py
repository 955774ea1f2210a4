"""The demo scenario: invented data for a fictional council in two editions (shipped in the wheel)."""

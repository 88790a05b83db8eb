"""Engineering calculations: pure functions, units in the names (signals, sensors, splits, loop load)."""

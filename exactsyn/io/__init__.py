"""Reading and writing circuits: JSON, OpenQASM 2.0 / 3.0 and terminal drawings."""

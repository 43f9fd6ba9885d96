"""exactsyn: provably minimal reversible circuits by SAT, with checkable proof logs."""

__version__ = "0.1.0"

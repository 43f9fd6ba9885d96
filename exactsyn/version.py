"""The package version, in a module of its own so that every layer may import it.

Outputs (certificates, DIMACS comments, JSON results, store rows) record it; the package
root re-exports it as ``exactsyn.__version__``.
"""

__version__ = "0.1.0"

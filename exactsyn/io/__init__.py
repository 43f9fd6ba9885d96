"""Circuits in files and pictures: the format registry, JSON, OpenQASM 2.0 / 3.0 and drawings.

Modules, one job each:

* :mod:`~exactsyn.io.registry` — the one list of formats (name, suffixes, kind, writer, reader);
* :mod:`~exactsyn.io.formats` — choose a format, render, write atomically, read a saved circuit;
* :mod:`~exactsyn.io.jsonio` — circuits as JSON;
* :mod:`~exactsyn.io.qasm` and :mod:`~exactsyn.io.qasm_defs` — OpenQASM writers and the reader
  (gate definitions judged by their unitary);
* :mod:`~exactsyn.io.layout` — the register names a file declared;
* :mod:`~exactsyn.io.draw` — terminal drawings; :mod:`~exactsyn.io.diagram` — the geometry
  :mod:`~exactsyn.io.svg` and :mod:`~exactsyn.io.png` draw.

Imports: the base modules and :mod:`exactsyn.core`.
"""

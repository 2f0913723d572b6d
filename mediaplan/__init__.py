"""mediaplan: water relations of plant culture media.

Layers (data flows one way): plan file -> Recipe -> evaluate() -> Evaluation -> views.
``mediaplan.thermo`` is the pure computation core (numpy only, SI units, no I/O).
"""

__version__ = "0.1.0"

"""The engine: compile a network to arrays, discretise it exactly, step it, on a variant axis.

Modules: :mod:`~thermonet.engine.compile` (network → arrays), :mod:`~thermonet.engine.simulate`
(the method registry and :func:`simulate`), :mod:`~thermonet.engine.kernels` (the stepping
loop), :mod:`~thermonet.engine.sparse` and :mod:`~thermonet.engine.ldl` (large networks),
:mod:`~thermonet.engine.batch` (many variants).
"""

"""Testing a machine or a program with pytest and Hypothesis.

``operator_scripts`` and ``spread_clocks`` are strategies a builder draws
operator scripts and irregular clocks from in their own properties;
``power_on`` (the ``powered_on`` fixture of the pytest plugin) gives a
program in a machine just switched on. The plugin (``_pytest_plugin``,
registered as the pytest entry point ``relaybench``) makes each program
with ``.expect`` checks a test item.
"""

from ._clocks import spread_clocks
from ._fixtures import PoweredOn, power_on
from ._operators import operator_scripts

__all__ = ["PoweredOn", "operator_scripts", "power_on", "spread_clocks"]

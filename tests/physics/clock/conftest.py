"""Make the packages physics and physics.clock, not the test folders, own those names.

With `pythonpath = ["tests"]` (pyproject) the folder tests/physics comes first on
sys.path, so `import physics` can resolve to it as a namespace package (the editable
install's finder is consulted only after the path finder), and physics.clock to this
folder: imports then fail with "unknown location". Put the project root first and
replace any such stand-in with the real package before the test modules here import it.
"""

import importlib
import sys
from pathlib import Path

_PROJECT_ROOT = str(Path(__file__).resolve().parents[3])
if sys.path[:1] != [_PROJECT_ROOT]:
    sys.path.insert(0, _PROJECT_ROOT)
for _name in ("physics.clock", "physics"):
    _module = sys.modules.get(_name)
    if _module is not None and getattr(_module, "__file__", None) is None:
        del sys.modules[_name]
importlib.import_module("physics.clock")

"""Layer 3, the globin reference frame: reference chains, helix labels and numbering, functional sites."""
from globcons.frame.reference import *  # noqa: F403
from globcons.frame.reference import __all__  # noqa: F401

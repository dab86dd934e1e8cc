"""wallrun: design of long reinforced-concrete cantilever retaining walls along a run.

Preliminary design aid: every result is to be checked and signed by a qualified
engineer under the local codes and national annex.
"""

__version__ = "0.1.0"

"""wallrun: design of long reinforced-concrete cantilever retaining walls along a run.

Preliminary design aid: every result is to be checked and signed by a qualified
engineer under the local codes and national annex.

Scripting::

    import wallrun
    site = wallrun.load_site("sites/access-road-fill")
    result = wallrun.design(site)          # a wallrun.results.DesignResult
    wallrun.write_outputs(result, "out")   # the same files as ``wallrun design``
"""

__version__ = "0.1.0"


def load_site(path):
    """Read and validate a site folder (raises ``wallrun.errors.InputError``)."""
    from wallrun.site import load_site as _load
    return _load(path)


def design(site, progress=None, executor=None, parts=2, meanwhile=None):
    """Design the whole wall of a loaded site; returns a ``DesignResult``. ``executor``:
    a process pool the caller owns for the large bespoke searches, cut into ``parts``
    (best: its number of workers); None: this process does all. The result is the same.
    ``meanwhile``: a callable run once in this process while the workers finish their
    parts of the search (see ``wallrun.pipeline.design``)."""
    from wallrun.pipeline import design as _design
    return _design(site, progress=progress, executor=executor, parts=parts,
                   meanwhile=meanwhile)


def write_outputs(result, out_dir, executor=None):
    """Write the output folder of a result atomically. ``executor``: a process pool the
    caller owns that writes the drawings meanwhile (None: this process writes all; the
    files are the same)."""
    from wallrun.outputs.write import write_outputs as _write
    return _write(result, out_dir, executor=executor)

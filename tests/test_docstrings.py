"""Every public callable documents every parameter in a numpydoc Parameters section.

Public = the names a module exports (``__all__``, else names without a leading underscore)
that are defined in that module, the public methods of its classes, and class constructors
(documented in the class docstring's Parameters, or for plain records its Attributes;
a subclass may rely on its base class). ``self``, ``cls``, ``*args`` and ``**kwargs`` are not
required. KNOWN_GAPS may list callables still undocumented; it is empty, and a listed name
that is documented or no longer exists fails the test, so the list can only shrink.
"""

import importlib
import inspect
import pkgutil

import thermonet

#: Callables that still lack parameter documentation (none: every public parameter is
#: documented; a name listed here that is documented or no longer exists fails the test).
KNOWN_GAPS: frozenset = frozenset()

SECTIONS = ("Parameters", "Other Parameters", "Attributes")


def documented_names(doc):
    """Names listed in the Parameters, Other Parameters and Attributes sections."""
    names = set()
    lines = inspect.cleandoc(doc or "").splitlines()

    def header(i):
        return (i + 1 < len(lines) and lines[i].strip() and not lines[i].startswith(" ")
                and lines[i + 1].strip() and set(lines[i + 1].strip()) == {"-"})

    i = 0
    while i < len(lines):
        if header(i) and lines[i].strip() in SECTIONS:
            i += 2
            while i < len(lines) and not header(i):
                line = lines[i]
                if line.strip() and not line.startswith(" "):
                    head = line.split(" : ")[0] if " : " in line else line.strip()
                    names.update(n.strip().lstrip("*") for n in head.split(","))
                i += 1
            continue
        i += 1
    return names


def public_callables():
    for info in pkgutil.walk_packages(thermonet.__path__, "thermonet."):
        name = info.name
        if any(part.startswith("_") for part in name.split(".")[1:]):
            continue
        mod = importlib.import_module(name)
        exported = getattr(mod, "__all__", None) or [n for n in vars(mod) if not n[0] == "_"]
        for attr in exported:
            obj = getattr(mod, attr, None)
            if obj is None or getattr(obj, "__module__", None) != name:
                continue
            if inspect.isfunction(obj):
                yield f"{name}.{attr}", obj, [obj.__doc__]
            elif inspect.isclass(obj):
                docs = [c.__doc__ for c in obj.__mro__ if c is not object]
                docs.append(obj.__init__.__doc__)
                if obj.__init__ is not object.__init__:
                    yield f"{name}.{attr}", obj, docs
                for mname, member in vars(obj).items():
                    func = member.__func__ if isinstance(member, (classmethod, staticmethod)) \
                        else member
                    if not mname.startswith("_") and inspect.isfunction(func):
                        yield f"{name}.{attr}.{mname}", func, [func.__doc__]


def undocumented():
    out = {}
    for qual, obj, docs in public_callables():
        try:
            sig = inspect.signature(obj)
        except (TypeError, ValueError):
            continue
        params = [p.name for p in sig.parameters.values()
                  if p.name not in ("self", "cls")
                  and p.kind not in (p.VAR_POSITIONAL, p.VAR_KEYWORD)]
        names = set().union(*(documented_names(d) for d in docs))
        lacking = [p for p in params if p not in names]
        if lacking:
            out[qual] = lacking
    return out


def test_every_public_parameter_is_documented():
    gaps = undocumented()
    new = {q: p for q, p in gaps.items() if q not in KNOWN_GAPS}
    assert not new, ("public callables with parameters missing from their numpydoc "
                     "Parameters section (add 'name : type' and a line with its unit):\n"
                     + "\n".join(f"  {q}: {p}" for q, p in sorted(new.items())))
    fixed = sorted(KNOWN_GAPS - set(gaps))
    assert not fixed, f"documented now, remove from KNOWN_GAPS: {fixed}"


def test_the_checker_reads_numpydoc_sections():
    doc = """Summary.

    Parameters
    ----------
    a, b : float
        Two numbers [m].
    *args
        More.

    Returns
    -------
    c : float
    """
    assert documented_names(doc) == {"a", "b", "args"}

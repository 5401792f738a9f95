"""The package layout of DESIGN.md section 3: layers import only the layers before them."""

from __future__ import annotations

import ast
import subprocess
import sys
from pathlib import Path

import robust

PACKAGE = Path(robust.__file__).parent

#: The layers in order; a module may import its own layer and those listed before it.
LAYERS = ("errors", "exact", "model", "analysis", "verify", "render", "cli")


def _layer(module: str) -> str:
    """The layer of a dotted module name inside robust (``robust`` itself counts as cli)."""
    parts = module.split(".")
    if len(parts) == 1:
        return "cli"
    head = "errors" if parts[1] == "_version" else parts[1]
    return "cli" if head in ("cli", "__main__") else head


def _imports(path: Path) -> list[str]:
    """Absolute names of the robust modules a file imports (relative imports resolved)."""
    module = ".".join(path.relative_to(PACKAGE.parent).with_suffix("").parts)
    package = module.split(".") if path.name == "__init__.py" else module.split(".")[:-1]
    if path.name == "__init__.py":
        package = module.split(".")[:-1]
    out = []
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = package[: len(package) - node.level + 1]
                name = ".".join([*base, node.module] if node.module else base)
            else:
                name = node.module or ""
            if name.startswith("robust"):
                out.append(name)
        elif isinstance(node, ast.Import):
            out += [a.name for a in node.names if a.name.startswith("robust")]
    return out


def test_every_layer_imports_only_the_layers_before_it():
    """No module imports a layer listed after its own (DESIGN.md section 3)."""
    bad = []
    for path in PACKAGE.rglob("*.py"):
        own = _layer(".".join(path.relative_to(PACKAGE.parent).with_suffix("").parts))
        if path == PACKAGE / "__init__.py":
            continue  # the public API re-exports from every layer, lazily
        for name in _imports(path):
            if LAYERS.index(_layer(name)) > LAYERS.index(own):
                bad.append(f"{path.relative_to(PACKAGE)} imports {name}")
    assert bad == []


def test_only_the_display_hook_reaches_the_renderers_by_name():
    """Below render, only model/display.py names a render module (a notebook's _repr_html_,
    called at display time); no other module works around the layers by a module's name."""
    users = []
    for path in PACKAGE.rglob("*.py"):
        own = _layer(".".join(path.relative_to(PACKAGE.parent).with_suffix("").parts))
        if own in ("render", "cli") or path == PACKAGE / "__init__.py":
            continue
        if "robust.render" in path.read_text() and "import_module" in path.read_text():
            users.append(str(path.relative_to(PACKAGE)))
    assert users == ["model/display.py"]


def test_only_the_numbers_module_imports_the_big_number_backend():
    """gmpy2 (or flint) is imported in robust/exact/numbers.py alone."""
    users = []
    for path in PACKAGE.rglob("*.py"):
        for node in ast.walk(ast.parse(path.read_text())):
            names = []
            if isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom) and not node.level:
                names = [node.module or ""]
            if any(n.split(".")[0] in ("gmpy2", "flint") for n in names):
                users.append(str(path.relative_to(PACKAGE)))
    assert sorted(set(users)) == ["exact/numbers.py"]


def test_modules_stay_under_the_size_limit():
    """Every module stays under ~600 lines (STYLE.md: split by concept before that)."""
    sizes = {str(p.relative_to(PACKAGE)): len(p.read_text().splitlines()) for p in PACKAGE.rglob("*.py")}
    assert {name: n for name, n in sizes.items() if n > 650} == {}


def test_importing_the_package_loads_no_heavy_library():
    """``import robust`` loads neither sympy, scipy, networkx, matplotlib nor numpy (lazy API)."""
    code = ("import sys, robust; heavy = ('sympy', 'scipy', 'networkx', 'matplotlib', 'numpy'); "
            "print(','.join(m for m in heavy if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_public_names_resolve_lazily():
    """Every name in ``robust.__all__`` resolves to an object of the layer that defines it."""
    for name in robust.__all__:
        assert getattr(robust, name) is not None

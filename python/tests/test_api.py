"""The package's surface: documented, and described by its type stubs."""

import ast
import inspect
import pathlib

import lexiclade
from lexiclade import _native

STUBS = pathlib.Path(_native.__file__).with_name("_native.pyi")


def public(obj):
    return {n for n in dir(obj) if not n.startswith("_")}


def stub_tree():
    return ast.parse(STUBS.read_text(encoding="utf-8"))


def test_every_name_is_documented():
    assert lexiclade.__doc__ and "Clusters" in lexiclade.__doc__
    for cls in (lexiclade.Clusters, lexiclade.Features, lexiclade.Tagger):
        assert cls.__doc__ and len(cls.__doc__) > 80, cls
        assert cls.__module__ == "lexiclade"
        for name in public(cls):
            doc = inspect.getdoc(getattr(cls, name))
            assert doc and len(doc) > 20, f"{cls.__name__}.{name}"
    assert "eval --json" in lexiclade.score.__doc__


def test_the_stubs_list_exactly_what_the_module_has():
    tree = stub_tree()
    classes = {n.name: n for n in tree.body if isinstance(n, ast.ClassDef)}
    functions = {n.name for n in tree.body if isinstance(n, ast.FunctionDef)}
    assert set(classes) == {"Clusters", "Features", "Tagger"}
    assert functions == {"score"}
    for name, node in classes.items():
        stubbed = {n.name for n in node.body
                   if isinstance(n, ast.FunctionDef)
                   and not n.name.startswith("_")}
        assert stubbed == public(getattr(lexiclade, name)), name


def test_the_stubs_give_the_same_arguments():
    tree = stub_tree()
    for node in ast.walk(tree):
        if not isinstance(node, ast.ClassDef):
            continue
        for fn in node.body:
            if not isinstance(fn, ast.FunctionDef) or fn.decorator_list and \
                    any(getattr(d, "id", "") == "property"
                        for d in fn.decorator_list):
                continue
            if fn.name.startswith("__") and fn.name != "__init__":
                continue
            cls = getattr(lexiclade, node.name)
            runtime = cls if fn.name == "__init__" else getattr(cls, fn.name)
            sig = inspect.signature(runtime)
            names = [p.name for p in sig.parameters.values()]
            stub = [a.arg for a in fn.args.posonlyargs + fn.args.args +
                    fn.args.kwonlyargs]
            stub = [a for a in stub if a not in ("self", "cls")]
            names = [a for a in names if a not in ("self", "cls", "type")]
            assert names == stub, (node.name, fn.name)


def test_the_package_is_typed():
    assert STUBS.exists()
    assert STUBS.with_name("py.typed").exists()

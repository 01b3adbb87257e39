"""The type stubs of the extension (tauwise/_tauwise.pyi) name the same
functions and parameters, in the same order, as the extension itself."""

import ast
import inspect
from pathlib import Path

import tauwise
from tauwise import _tauwise

STUB = Path(tauwise.__file__).with_name("_tauwise.pyi")


def stub_functions():
    tree = ast.parse(STUB.read_text())
    out = {}
    for node in tree.body:
        if isinstance(node, ast.FunctionDef):
            out[node.name] = [a.arg for a in node.args.args]
    return out


def test_every_extension_function_has_its_stub():
    stubs = stub_functions()
    real = {
        name: [p for p in inspect.signature(getattr(_tauwise, name)).parameters]
        for name in dir(_tauwise)
        if callable(getattr(_tauwise, name)) and not name.startswith("_")
        and not isinstance(getattr(_tauwise, name), type)
    }
    assert set(stubs) == set(real)
    for name, params in real.items():
        assert stubs[name] == params, name


def test_the_package_is_typed_and_documented():
    assert Path(tauwise.__file__).with_name("py.typed").exists()
    for name in tauwise.__all__:
        obj = getattr(tauwise, name)
        if callable(obj):
            assert obj.__doc__ and len(obj.__doc__) > 40, name

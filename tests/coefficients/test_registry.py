"""Model registry: built-ins, run-time registration and the entry-point group."""

import importlib.metadata

import pytest

import activity as act
import activity.coefficients as registry
from activity import InputError
from activity.coefficients import ENTRY_POINT_GROUP
from activity.coefficients.davies import DaviesModel


@pytest.fixture
def clean_registry(monkeypatch):
    monkeypatch.setattr(registry, "_REGISTRY", dict(registry._BUILTIN))
    monkeypatch.setattr(registry, "_entry_points_loaded", False)
    yield registry


class _FakeEntryPoint:
    def __init__(self, name, target):
        self.name = name
        self._target = target

    def load(self):
        return self._target


def test_entry_point_models_are_found(clean_registry, monkeypatch):
    calls = []

    def fake_entry_points(group=None):
        calls.append(group)
        return [_FakeEntryPoint("half-davies", lambda: DaviesModel(c=0.15))] if group == ENTRY_POINT_GROUP else []

    monkeypatch.setattr(importlib.metadata, "entry_points", fake_entry_points)
    assert "half-davies" in act.available_models()
    assert act.get_model("half-davies").params == {"c": 0.15}
    assert calls == [ENTRY_POINT_GROUP]


def test_register_and_refuse_duplicates(clean_registry):
    act.register_model("my-davies", lambda: DaviesModel(c=0.2))
    assert act.get_model("My_Davies").params["c"] == 0.2
    with pytest.raises(InputError):
        act.register_model("davies", DaviesModel)
    act.register_model("davies", lambda: DaviesModel(c=0.25), replace=True)
    assert act.get_model("davies").params["c"] == 0.25  # the replacement is what get_model returns


def test_unknown_and_bad_factories(clean_registry):
    with pytest.raises(InputError) as err:
        act.get_model("no-such-model")
    assert err.value.field == "model"
    act.register_model("broken", lambda: object())
    with pytest.raises(InputError, match="did not return an ActivityModel"):
        act.get_model("broken")
    with pytest.raises(InputError):
        act.register_model("not-callable", 42)

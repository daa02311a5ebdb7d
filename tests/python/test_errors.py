"""Typed exceptions carrying the library's what/where/fix text."""

import numpy as np
import pytest

import embloom


def test_parameter_error_is_value_error(small_set):
    x, y = small_set
    with pytest.raises(embloom.ParameterError) as info:
        embloom.grow(x, y, method="interpolate", k=0)
    assert isinstance(info.value, ValueError)
    assert "fix:" in str(info.value)
    # The library's own name of the parameter, never a command-line flag.
    assert "--" not in str(info.value)


def test_unknown_method_is_parameter_error(small_set):
    x, y = small_set
    with pytest.raises(embloom.ParameterError, match="fix:"):
        embloom.grow(x, y, method="no-such-method")


def test_unknown_keyword_is_parameter_error(small_set):
    x, y = small_set
    with pytest.raises(embloom.ParameterError, match="not a method parameter"):
        embloom.grow(x, y, neighbors=3)


def test_missing_file_is_input_error(tmp_path):
    with pytest.raises(embloom.InputError) as info:
        embloom.read(tmp_path / "absent.npz")
    assert isinstance(info.value, ValueError)
    assert "absent.npz" in str(info.value)


def test_wrong_key_names_key_and_fix(tmp_path, small_set):
    x, y = small_set
    path = tmp_path / "set.npz"
    np.savez(path, vectors=x, labels=y)
    with pytest.raises(embloom.InputError, match="fix:"):
        embloom.read(path)


def test_label_count_mismatch(small_set):
    x, y = small_set
    with pytest.raises(embloom.InputError, match="one label per row"):
        embloom.grow(x, y[:-1])


def test_existing_output_refused(tmp_path, small_set):
    x, y = small_set
    path = tmp_path / "out.npz"
    embloom.write(path, x, y)
    with pytest.raises(embloom.InputError):
        embloom.write(path, x, y)
    embloom.write(path, x, y, force=True)

"""wallrun.memory: the allocator tuning takes on glibc Linux, and a second call is a no-op."""

import sys

import pytest

from wallrun import memory


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="glibc mallopt only")
def test_tuning_takes_and_repeats():
    assert memory.tune_allocator() is True
    assert memory.tune_allocator() is True  # a second call is a no-op


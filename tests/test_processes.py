"""snrgain.processes: how many processes, one piece of work run in a forked process beside this one."""

import pytest

from snrgain import processes


def test_work_elsewhere_gives_its_result_or_none():
    with processes.elsewhere(lambda: {"scores": [1.5, 2.5]}) as got:
        here = sum(range(10))
        assert got() == {"scores": [1.5, 2.5]}
    assert here == 45
    with processes.elsewhere(lambda: 1 / 0) as got:  # a failure there: None, nothing raised or printed here
        assert got() is None


def test_a_forked_process_only_beside_a_spare_core(monkeypatch):
    import os

    monkeypatch.setattr(os, "sched_getaffinity", lambda pid: {0, 1}, raising=False)
    monkeypatch.setattr(processes, "workers", lambda count: 2)
    monkeypatch.setattr(processes, "runnable_now", lambda: 2)  # this process and one other ready to run now
    monkeypatch.setattr(os, "getloadavg", lambda: (1.2, 1.0, 1.0))
    assert processes.spare_core()
    monkeypatch.setattr(os, "getloadavg", lambda: (3.0, 1.0, 1.0))  # busy: no second process
    assert not processes.spare_core()
    monkeypatch.setattr(processes, "runnable_now", lambda: 1)  # the last minute busy, but a core free now
    assert processes.spare_core()
    monkeypatch.setattr(processes, "runnable_now", lambda: None)  # not known: the load average decides
    assert not processes.spare_core()
    monkeypatch.setattr(processes, "workers", lambda count: 1)  # one core, no fork, or SNRGAIN_WORKERS=1
    monkeypatch.setattr(os, "getloadavg", lambda: (0.0, 0.0, 0.0))
    monkeypatch.setattr(processes, "runnable_now", lambda: 1)
    assert not processes.spare_core()


def test_runnable_now_counts_this_thread_where_the_machine_says():
    import sys

    now = processes.runnable_now()
    if sys.platform.startswith("linux"):
        assert now is not None and now >= 1  # this thread is running as it reads the file
    else:
        assert now is None


def test_workers_setting_is_checked(monkeypatch):
    monkeypatch.setenv(processes.ENV_WORKERS, "many")
    with pytest.raises(ValueError, match="SNRGAIN_WORKERS='many'"):
        processes.workers(4)
    for bad in ("0", "-1"):  # taken as 1 while "many" was refused
        monkeypatch.setenv(processes.ENV_WORKERS, bad)
        with pytest.raises(ValueError, match="1 or more"):
            processes.workers(4)
    monkeypatch.setenv(processes.ENV_WORKERS, "1")
    assert processes.workers(4) == 1

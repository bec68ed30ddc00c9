"""The survey's arithmetic: need per interval, billing power factor, leading room, and the step controller."""

from __future__ import annotations

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bankbuild.calc.survey import billing_power_factor, need_kvar, room_kvar, simulate_controller


def test_need_is_the_correction_multiplier_times_p():
    # PF correction multiplier tan φ1 − tan φ2, 0.80 -> 0.95 = 0.421 (standard multiplier tables)
    p = 100.0
    q = p * math.tan(math.acos(0.80))
    assert need_kvar(p, q, 0.95) == pytest.approx(42.1, abs=0.05)
    # 0.70 -> 0.95 = 0.691 (standard multiplier tables, which cut to three decimals: 0.6915...)
    q = p * math.tan(math.acos(0.70))
    assert need_kvar(p, q, 0.95) == pytest.approx(69.1, abs=0.1)


def test_billing_power_factor_hand_worked():
    # Hand-worked: 48,000 kWh and 27,600 kvarh -> 48,000 / √(48,000² + 27,600²) = 48,000 / 55,369.3 = 0.86691
    assert billing_power_factor(48_000.0, 27_600.0) == pytest.approx(0.86691, abs=5e-6)
    assert billing_power_factor(0.0, 0.0) == 1.0
    with pytest.raises(ValueError):
        billing_power_factor(-1.0, 0.0)


def test_room_allows_exactly_the_leading_limit():
    # With C = room connected, the PF is the limit, leading: P / √(P² + (Q − C)²) = 0.98
    p, q = 100.0, 30.0
    c = room_kvar(p, q, 0.98)
    assert p / math.hypot(p, q - c) == pytest.approx(0.98, abs=1e-12)
    assert q - c < 0
    assert room_kvar(p, q, 1.0) == pytest.approx(q)


def test_controller_follows_a_ramp_with_equal_steps():
    # Need 0, 25, 55, 105, -10 kvar; four 25 kvar steps; in at any deficit, out above 25 kvar surplus.
    run = simulate_controller([0, 900, 1800, 2700, 3600], [0, 25, 55, 105, -10], [1e9] * 5, 0.0, [25] * 4, 0.0,
                              0.0, 25.0)
    closed = _replay(run.events, 4, 5)
    assert [sum(25 for k in range(4) if state[k]) for state in closed] == [0, 25, 75, 100, 0]
    assert run.lead_flags == ()


def test_controller_respects_the_reconnection_delay():
    # Need 50, 0, 50 kvar one minute apart with a 300 s delay: the step opened at 60 s cannot close at 120 s.
    run = simulate_controller([0, 60, 120, 400], [50, 0, 50, 50], [1e9] * 4, 0.0, [50], 300.0, 0.0, 25.0)
    assert run.events == ((0, 0, True), (1, 0, False), (3, 0, True))


def test_controller_flags_a_fixed_part_that_leads_too_far():
    run = simulate_controller([0, 900], [10, -40], [60, 20], 30.0, [20], 0.0, 0.0, 20.0)
    assert run.lead_flags == (1,)


def _replay(events, steps: int, intervals: int) -> list[list[bool]]:
    """State of every step at the end of each interval, rebuilt from the log."""
    state = [False] * steps
    out = []
    by_interval: dict[int, list] = {}
    for i, k, on in events:
        by_interval.setdefault(i, []).append((k, on))
    for i in range(intervals):
        for k, on in by_interval.get(i, []):
            state[k] = on
        out.append(list(state))
    return out


profiles = st.integers(min_value=1, max_value=120).flatmap(lambda n: st.tuples(
    st.lists(st.floats(min_value=0.0, max_value=500.0, allow_subnormal=False), min_size=n, max_size=n),  # kW
    st.lists(st.floats(min_value=-50.0, max_value=400.0, allow_subnormal=False), min_size=n, max_size=n),  # kvar
    st.lists(st.sampled_from([60.0, 300.0, 900.0]), min_size=n, max_size=n),  # spacing
))


@settings(max_examples=150, deadline=None)
@given(profile=profiles,
       steps=st.lists(st.sampled_from([5.0, 10.0, 12.5, 25.0, 50.0, 100.0]), min_size=1, max_size=7),
       fixed=st.sampled_from([0.0, 10.0, 30.0]), lead=st.sampled_from([1.0, 0.99, 0.95]),
       delay=st.sampled_from([0.0, 65.0, 600.0]), share=st.sampled_from([0.0, 1 / 3, 1.0]))
def test_controller_properties(profile, steps, fixed, lead, delay, share):
    kw, kvar, spacing = profile
    times = [sum(spacing[:i]) for i in range(len(kw))]
    need = [need_kvar(p, q, 0.95) for p, q in zip(kw, kvar, strict=True)]
    room = [room_kvar(p, q, lead) for p, q in zip(kw, kvar, strict=True)]
    q_min = min(steps)
    run = simulate_controller(times, need, room, fixed, steps, delay, share * q_min, (1 - share) * q_min)
    states = _replay(run.events, len(steps), len(kw))
    flagged = set(run.lead_flags)
    for i, state in enumerate(states):
        connected = fixed + sum(q for q, on in zip(steps, state, strict=True) if on)
        net = kvar[i] - connected
        if i not in flagged and kw[i] > 0 and net < 0 and connected > 0:
            # leading with the bank on, but never beyond the limit unless the result flags the interval: PF ≥ the
            # limit, i.e.
            # the leading kvar is at most P·tan(arccos limit) (to the controller's 1e-9 kvar tolerance)
            assert -net <= kw[i] * math.tan(math.acos(lead)) + 1e-6
        if i in flagged:
            assert not any(state) and fixed > room[i]  # only the fixed part is left on, and it leads too far
    # switching counts equal the closings in the log, and each step's log alternates closed/open from open
    for k in range(len(steps)):
        mine = [(i, on) for i, j, on in run.events if j == k]
        assert run.operations[k] == sum(1 for _, on in mine if on)
        assert [on for _, on in mine] == [n % 2 == 0 for n in range(len(mine))]
        # closings equal the open -> closed changes between consecutive interval states (from all open)
        previous = [False] + [s[k] for s in states[:-1]]
        changes = sum(1 for before, now in zip(previous, [s[k] for s in states], strict=True) if now and not before)
        assert changes == run.operations[k]  # no step goes in and out within one interval
        # a step closes again only after the reconnection delay
        for (i0, on0), (i1, on1) in zip(mine, mine[1:], strict=False):
            if not on0 and on1:
                assert times[i1] - times[i0] >= delay - 1e-9

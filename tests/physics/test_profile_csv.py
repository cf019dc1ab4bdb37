"""Measured duty-profile CSV: header units, SI scaling, and file:line errors for bad input."""

import math

import numpy as np
import pytest

from rulecheck.physics.dynamics import reduce_profile
from rulecheck.physics.profile_csv import ProfileError, read_profile_csv

RPM = 2 * math.pi / 60
LBF_FT = 1.35581795  # NIST SP 811 (2008) App. B: 1 lbf·ft in N·m (8 significant figures)


def _write(tmp_path, text, name="p.csv"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_reads_and_scales_columns(tmp_path):
    path = _write(
        tmp_path,
        "# logged on the test stand\n"
        "torque [lbf*ft],time [ms],speed [r/min]\n"
        "10,0,1500\n"
        "\n"
        "20,500,1500\n"
        "-5,1000,0\n",
    )
    p = read_profile_csv(path)
    assert list(p.time) == pytest.approx([0.0, 0.5, 1.0])
    assert list(p.speed) == pytest.approx([1500 * RPM, 1500 * RPM, 0.0])
    assert list(p.torque) == pytest.approx([10 * LBF_FT, 20 * LBF_FT, -5 * LBF_FT], rel=1e-8)
    assert p.source == str(path)
    reduce_profile(p.time, p.speed, p.torque)  # a read profile reduces


def test_speed_in_other_notations(tmp_path):
    # IEC 60034-1 writes min^-1; it means revolutions per minute (docs/references.md pitfall 1)
    p = read_profile_csv(_write(tmp_path, "time [s],speed [min^-1],torque [N*m]\n0,60,1\n1,60,1\n"))
    assert p.speed[0] == pytest.approx(2 * math.pi)


@pytest.mark.parametrize(
    ("text", "line", "fragment"),
    [
        ("time [s],speed [r/min]\n0,1\n1,1\n", 1, "missing column(s): torque"),
        ("time [s],speed,torque [N*m]\n", 1, "not 'name [unit]'"),
        ("time [s],speed [r/min],torque [N*m],current [A]\n", 1, "unknown column 'current'"),
        ("time [s],time [s],torque [N*m]\n", 1, "appears twice"),
        ("time [s],speed [Hz],torque [N*m]\n0,1,1\n1,1,1\n", 1, "not a shaft speed"),
        ("time [s],speed [r/min],torque [J]\n0,1,1\n1,1,1\n", 1, "energy unit"),
        ("time [s],speed [r/min],torque [N*m]\n0,1,1\n1,x,1\n2,1,1\n", 3, "'x' is not a number"),
        ("time [s],speed [r/min],torque [N*m]\n0,1,1\n# note\n1,0,5,1\n", 4, "expected 3 values, found 4"),
        ("time [s],speed [r/min],torque [N*m]\n0,1,1\n1,1\n", 3, "expected 3 values, found 2"),
        ("time [s],speed [r/min],torque [N*m]\n0,1,1\n1,nan,1\n", 3, "not a finite number"),
        ("time [s],speed [r/min],torque [N*m]\n0,1,1\n1,1,1e400\n", 3, "not a finite number"),
        ("time [s],speed [r/min],torque [N*m]\n0,1,1\n1,1,1\n\n1,1,1\n", 5, "time does not increase"),
        ("time [s],speed [r/min],torque [N*m]\n0,1,1\n", 1, "at least two data rows"),
    ],
)
def test_errors_name_file_and_line(tmp_path, text, line, fragment):
    path = _write(tmp_path, text)
    with pytest.raises(ProfileError) as info:
        read_profile_csv(path)
    assert info.value.line == line
    assert str(info.value).startswith(f"{path}:{line}: ")
    assert fragment in info.value.message


def test_decimal_comma_gets_a_hint(tmp_path):
    with pytest.raises(ProfileError) as info:
        read_profile_csv(_write(tmp_path, "time [s],speed [r/min],torque [N*m]\n0,1,1\n0,5,1,1\n"))
    assert "decimal comma" in info.value.hint


def test_file_level_errors(tmp_path):
    with pytest.raises(ProfileError, match="no header"):
        read_profile_csv(_write(tmp_path, "# only a comment\n\n"))
    with pytest.raises(ProfileError, match="cannot read file"):
        read_profile_csv(tmp_path / "absent.csv")
    big = _write(tmp_path, "time [s],speed [r/min],torque [N*m]\n" + "0,1,1\n" * 100)
    with pytest.raises(ProfileError, match="limit"):
        read_profile_csv(big, max_bytes=100)
    raw = tmp_path / "latin1.csv"
    raw.write_bytes("time [s],speed [r/min],torque [N\xb7m]\n".encode("latin-1"))
    with pytest.raises(ProfileError, match="UTF-8"):
        read_profile_csv(raw)


def test_large_file_round_trip(tmp_path):
    # 200,000 rows written with numpy read back exactly (correctness only; not timed)
    n = 200_000
    t = np.arange(n) * 1e-3
    data = np.column_stack([t, np.full(n, 1455.0), 40 * np.sin(t)])
    path = tmp_path / "big.csv"
    np.savetxt(path, data, delimiter=",", header="time [s],speed [rpm],torque [N*m]", comments="", fmt="%.9g")
    p = read_profile_csv(path)
    assert p.time.size == n
    assert np.allclose(p.torque, data[:, 2], rtol=1e-8)


def test_one_pass_reading_agrees_with_line_by_line_reading(tmp_path, monkeypatch) -> None:
    """Files read in one pass give what the line-by-line reader gives: the same arrays, or the same error."""
    import random

    from rulecheck.physics import profile_csv as pc

    rng = random.Random(11)
    pieces = ["# note", "", "   ", "1.5,10,2", "0.5,10,2", "x,1,2", "3,4", "2.0,5,inf", "0,1,2 # tail"]
    texts = []
    for n in range(150):
        rows = [f"{0.1 * k:.3f},{rng.uniform(0, 1500):.1f},{rng.uniform(-50, 90):.2f}"
                for k in range(rng.randint(0, 6))]
        if n % 3:
            rows.insert(rng.randint(0, len(rows)), rng.choice(pieces))
        head = ["# measured", ""] if n % 5 == 0 else []
        newline = "\r\n" if n % 7 == 0 else "\n"
        texts.append(newline.join([*head, "time [s],speed [r/min],torque [N*m]", *rows]) + ("\n" if n % 2 else ""))

    def read(path):
        try:
            p = pc.read_profile_csv(path)
            return ("ok", p.time.tolist(), p.speed.tolist(), p.torque.tolist())
        except pc.ProfileError as exc:
            return ("error", exc.line, exc.message)

    kinds = set()
    for k, text in enumerate(texts):
        path = tmp_path / f"p{k}.csv"
        path.write_text(text, encoding="utf-8", newline="")
        fast = read(path)
        with monkeypatch.context() as m:
            m.setattr(pc, "_plain_rows", lambda name, text: None)
            slow = read(path)
        assert fast == slow, text
        kinds.add(fast[0])
    assert kinds == {"ok", "error"}  # both paths were compared on good and on bad files

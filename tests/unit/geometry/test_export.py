"""VTU round trip: fields written with write_vtu come back unchanged; the write is atomic."""
import numpy as np

from geometry.export import read_vtu, write_vtu
from geometry.pipes import straight_pipe


def test_round_trip(tmp_path, rng):
    mesh = straight_pipe(1.0, 0.1, 8, 5)
    fields = {"pressure": rng.normal(size=mesh.n_cells), "velocity": rng.normal(size=(mesh.n_cells, 2))}
    path = write_vtu(tmp_path / "out.vtu", mesh, fields)
    back = read_vtu(path)
    assert set(back) == set(fields)
    for name, value in fields.items():
        assert np.array_equal(back[name], value)
    assert [p.name for p in tmp_path.iterdir()] == ["out.vtu"]  # no temporary file left behind


def test_points_are_x_r_zero(tmp_path):
    import meshio
    mesh = straight_pipe(1.0, 0.1, 4, 3)
    write_vtu(tmp_path / "m.vtu", mesh, {"one": np.ones(mesh.n_cells)})
    data = meshio.read(tmp_path / "m.vtu")
    assert np.array_equal(data.points[:, :2], mesh.nodes) and np.all(data.points[:, 2] == 0.0)
    assert data.cells[0].type == "quad" and np.array_equal(data.cells[0].data, mesh.cell_nodes)


def test_wrong_field_length_is_refused(tmp_path):
    import pytest
    mesh = straight_pipe(1.0, 0.1, 4, 3)
    with pytest.raises(ValueError, match="field 'bad'"):
        write_vtu(tmp_path / "m.vtu", mesh, {"bad": np.ones(3)})

"""Result plots and field.vtu go through the one atomic writer
(:func:`racfield.postprocess.atomic.replace_bytes`).

The atomic writer's contract (common practice for a write-then-rename
writer): a file written twice is simply replaced, the folder holds no
temporary file afterwards, the bytes are a whole file of their format, and a
write that fails part-way leaves the previous file as it was and no temporary
file behind.  Formats are checked with their own readers: the PNG signature
and chunks (PNG specification, ISO/IEC 15948) decoded by Pillow, the VTU read
back by meshio.
"""

from __future__ import annotations

import io

import meshio
import pytest
from PIL import Image

from racfield.fem.sweep import run_sweep
from racfield.geometry.case import parse_case
from racfield.postprocess import plotting
from racfield.postprocess.report import build_report
from racfield.postprocess.writers import field_vtu, rac_plot

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"   # the eight bytes every PNG file starts with (ISO/IEC 15948, 5.2)

DOC = {"sweep": {"frequencies": ["10 kHz", "100 kHz"]},
       "window": {"width": "2 mm", "height": "2 mm", "boundary": "open"},
       "winding": [{"name": "wire", "current": "1 A"}],
       "conductor": [{"winding": "wire", "shape": "round", "diameter": "1 mm", "at": ["1 mm", "1 mm"]}]}


@pytest.fixture(scope="module")
def report():
    case = parse_case(DOC)
    return build_report(case, run_sweep(case))


def _assert_png(path):
    data = path.read_bytes()
    assert data.startswith(PNG_SIGNATURE)          # PNG signature (ISO/IEC 15948)
    assert data.endswith(b"IEND\xaeB`\x82")        # the closing IEND chunk and its CRC (ISO/IEC 15948)
    with Image.open(io.BytesIO(data)) as image:    # a full decode (Pillow)
        image.load()
        assert image.format == "PNG" and image.width > 0 and image.height > 0


def test_plot_and_field_written_twice_leave_whole_files_and_no_temporaries(report, tmp_path):
    for _ in range(2):
        assert rac_plot.write(report, tmp_path) == [tmp_path / "rac_over_rdc.png"]
        assert field_vtu.write(report, tmp_path) == [tmp_path / "field.vtu"]
    # nothing but the two files: no temporary left behind (atomic writer contract, common practice)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["field.vtu", "rac_over_rdc.png"]
    _assert_png(tmp_path / "rac_over_rdc.png")
    mesh = meshio.read(tmp_path / "field.vtu")     # meshio's own VTU reader
    snapshot = report.sweep.snapshot
    assert len(mesh.points) == snapshot.points.shape[1]           # every mesh node
    assert sum(len(block.data) for block in mesh.cells) == snapshot.triangles.shape[1]   # every element


def test_failed_plot_write_keeps_the_old_file_and_leaves_no_temporary(report, tmp_path, monkeypatch):
    target = tmp_path / "rac_over_rdc.png"
    rac_plot.write(report, tmp_path)
    before = target.read_bytes()

    def broken(self, fname, *args, **kwargs):   # writes part of a file, then fails
        (fname.write if hasattr(fname, "write") else open(fname, "wb").write)(PNG_SIGNATURE)
        raise OSError("disk full")

    monkeypatch.setattr(plotting.Figure, "savefig", broken)
    with pytest.raises(OSError, match="disk full"):
        rac_plot.write(report, tmp_path)
    # the previous file whole, nothing else (atomic writer contract, common practice)
    assert target.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["rac_over_rdc.png"]


def test_failed_field_write_keeps_the_old_file_and_leaves_no_temporary(report, tmp_path, monkeypatch):
    target = tmp_path / "field.vtu"
    field_vtu.write(report, tmp_path)
    before = target.read_bytes()

    def broken(filename, mesh, file_format=None, **kwargs):   # writes part of a file, then fails
        with open(filename, "wb") as handle:
            handle.write(b"<?xml")
        raise OSError("disk full")

    monkeypatch.setattr(field_vtu.meshio, "write", broken)
    with pytest.raises(OSError, match="disk full"):
        field_vtu.write(report, tmp_path)
    # the previous file whole, nothing else (atomic writer contract, common practice)
    assert target.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["field.vtu"]

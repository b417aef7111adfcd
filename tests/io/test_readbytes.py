"""The readers record the SHA-256 of the very bytes they parse (workbench.io.readbytes);
the reference digest is hashlib's SHA-256 of the file (FIPS 180-4)."""
import gzip
import hashlib

from workbench.io.met import read_met
from workbench.io.readbytes import path_key, recording
from workbench.io.samples import read_air
from workbench.io.sites import read_sites

from tests.tiny_inputs import AIR, SITES, met_text


def _sha(p):
    return hashlib.sha256(p.read_bytes()).hexdigest()


def test_each_reader_records_the_digest_of_its_file(tmp_path):
    (tmp_path / "sites.toml").write_text(SITES)
    (tmp_path / "air.csv").write_text(AIR)
    gz = tmp_path / "met.csv.gz"
    gz.write_bytes(gzip.compress(met_text().encode()))       # streamed block by block
    with recording() as seen:
        cat = read_sites(tmp_path / "sites.toml")
        read_air(tmp_path / "air.csv", cat)
        read_met(gz, cat)
    for name in ("sites.toml", "air.csv", "met.csv.gz"):
        assert seen[path_key(tmp_path / name)] == _sha(tmp_path / name), name


def test_nothing_is_kept_outside_a_recording(tmp_path):
    (tmp_path / "sites.toml").write_text(SITES)
    read_sites(tmp_path / "sites.toml")
    with recording() as seen:
        pass
    assert seen == {}

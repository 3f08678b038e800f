"""atheris harness: a whole CSV file through the schedule reader and the check
(checker.ingest.schedule.read_schedule, checker.api.check_schedule). Slower per input than the
parser harnesses. See README.md."""

import os
import sys
import tempfile

from _harness import atheris, require_atheris, run

if __name__ == "__main__":
    require_atheris()
    with atheris.instrument_imports(include=["checker.ingest"]):
        from checker.ingest.errors import IngestError
        from checker.ingest.schedule import read_schedule
    from checker.api import check_schedule
    from checker.ruleset.loader import load_ruleset

    RULES = load_ruleset("uk-na")
    FOLDER = tempfile.mkdtemp(prefix="capcheck-fuzz-")
    PATH = os.path.join(FOLDER, "schedule.csv")

HEAD = b"Mark,Piles,Pile dia,Spacing,L,W,Depth,Column,NEd,Concrete,Cover,Bars X,Bars Y\n"
ROW = b"PC1,4,600,1800,2700,2700,1200,600x600,4500,C32/40,75,12H25,12H25\n"


def TestOneInput(data: bytes) -> None:
    fdp = atheris.FuzzedDataProvider(data)
    body = fdp.ConsumeBytes(fdp.ConsumeIntInRange(0, 2000))
    doc = (HEAD + body) if fdp.ConsumeBool() else (HEAD + ROW + body)
    with open(PATH, "wb") as fh:
        fh.write(doc)
    try:
        sched = read_schedule(PATH)
    except IngestError as exc:
        assert PATH in str(exc), str(exc)
        return
    assert sched.rows_read == len(sched.caps) + len(sched.rejected)
    rv = check_schedule(sched, RULES, "fuzz")
    assert len(rv.findings) == len(sched.caps) * len(RULES.rules)


if __name__ == "__main__":
    run(TestOneInput)
    sys.exit(0)

"""Shared pieces of the scipy re-check scripts: a pass/fail tally and roots read back from polewright JSON."""


class Tally:
    """Counts PASS/FAIL lines; `finish()` prints "N passed, M failed" and returns the exit code."""

    def __init__(self):
        self.passed = 0
        self.failed = 0

    def check(self, ok, what):
        print(("PASS " if ok else "FAIL ") + what)
        if ok:
            self.passed += 1
        else:
            self.failed += 1

    def finish(self):
        print("%d passed, %d failed" % (self.passed, self.failed))
        return 1 if self.failed else 0


def roots_of(items):
    """polewright writes a real root as a number and a complex pair once, as {"re", "im"}."""
    out = []
    for r in items:
        if isinstance(r, dict):
            out += [complex(r["re"], r["im"]), complex(r["re"], -r["im"])] if r["im"] != 0 else [complex(r["re"], 0)]
        else:
            out.append(complex(r, 0))
    return out

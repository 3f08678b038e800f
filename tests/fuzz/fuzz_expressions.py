"""atheris harness: rule expressions (checker.ruleset.expr.compile_expression and evaluation over
arrays holding NaN, infinity and zeros). See README.md."""

import sys
import warnings

from _harness import atheris, require_atheris, run

if __name__ == "__main__":
    require_atheris()
    # ast.parse warns about text such as '1and' (a SyntaxWarning on stderr): noise here
    warnings.filterwarnings("ignore", category=SyntaxWarning)
    with atheris.instrument_imports(include=["checker"]):
        from checker.ruleset.expr import ExprError, compile_expression
    import numpy as np

NAMES = {"a", "b", "pile_dia", "n_piles"}
TOKENS = ["a", "b", "pile_dia", "n_piles", "1", "0", "2.5", "1e308", "+", "-", "*", "/", "**", "(", ")", ",",
          "<", "<=", ">", ">=", "==", "!=", " and ", " or ", "not ", "min(", "max(", "abs(", "sqrt(", "sin(",
          "cos(", "tan(", "atan(", "where(", "isnan(", "16", "-16", "__class__", ".", "[0]", "lambda:", "'x'"]


CMP = ["<", "<=", ">", ">=", "==", "!="]
FUNCS = ["abs", "sqrt", "sin", "cos", "tan", "atan"]


def typed(fdp, depth: int, kind: str) -> str:
    """A well-typed expression of the rule-file grammar drawn from the fuzzer's bytes; now and
    then a wrong-typed part (a comparison where a number is expected) as a hand-written file may."""
    if depth <= 0 or fdp.ConsumeIntInRange(0, 3) == 0:
        if kind == "bool":
            return f"({typed(fdp, 0, 'num')} {fdp.PickValueInList(CMP)} {typed(fdp, 0, 'num')})"
        return fdp.PickValueInList(["a", "b", "pile_dia", "n_piles", "0", "1", "2.5", "1e308", "1e-308"])
    d = depth - 1
    if kind == "bool":
        form = fdp.ConsumeIntInRange(0, 3)
        if form == 0:
            return f"not ({typed(fdp, d, 'bool')})"
        if form == 1:
            return f"isnan({typed(fdp, d, 'num')})"
        if form == 2:
            return f"({typed(fdp, d, 'bool')} {fdp.PickValueInList(['and', 'or'])} {typed(fdp, d, 'bool')})"
        return f"({typed(fdp, d, 'num')} {fdp.PickValueInList(CMP)} {typed(fdp, d, 'num')})"
    form = fdp.ConsumeIntInRange(0, 6)
    sub = "bool" if fdp.ConsumeIntInRange(0, 15) == 0 else "num"      # the odd wrong-typed operand
    if form == 0:
        return f"({typed(fdp, d, sub)} {fdp.PickValueInList(['+', '-', '*', '/'])} {typed(fdp, d, 'num')})"
    if form == 1:
        return f"({typed(fdp, d, sub)}) ** {fdp.PickValueInList(['2', '0.5', '-1', '16', '-16', '17', '3'])}"
    if form == 2:
        return f"-({typed(fdp, d, sub)})"
    if form == 3:
        return f"{fdp.PickValueInList(FUNCS)}({typed(fdp, d, sub)})"
    if form == 4:
        k = fdp.ConsumeIntInRange(1, 9)
        return f"{fdp.PickValueInList(['min', 'max'])}({', '.join(typed(fdp, d, 'num') for _ in range(k))})"
    if form == 5:
        return f"where({typed(fdp, d, 'bool')}, {typed(fdp, d, 'num')}, {typed(fdp, d, sub)})"
    return typed(fdp, d, "num")


def TestOneInput(data: bytes) -> None:
    fdp = atheris.FuzzedDataProvider(data)
    mode = fdp.ConsumeIntInRange(0, 2)
    if mode == 0:
        text = fdp.ConsumeUnicodeNoSurrogates(fdp.ConsumeIntInRange(0, 120))
    elif mode == 1:                         # token soup of the language
        text = "".join(fdp.PickValueInList(TOKENS) for _ in range(fdp.ConsumeIntInRange(1, 40)))
    else:                                   # grammar: typed expressions
        text = typed(fdp, fdp.ConsumeIntInRange(0, 8), fdp.PickValueInList(["num", "bool"]))
    try:
        e = compile_expression(text, NAMES)
    except ExprError as exc:
        assert str(exc)
        return
    values = [fdp.PickValueInList([0.0, -0.0, 1.0, -1.0, 1e308, float("nan"), float("inf"), -float("inf")])
              for _ in range(3)]
    env = {n: np.array(values) for n in e.names}
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        out = e(env)
    arr = np.asarray(out)
    assert arr.dtype.kind in "fb", (text, arr.dtype)


if __name__ == "__main__":
    run(TestOneInput)
    sys.exit(0)

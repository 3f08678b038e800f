"""capcheck: independent checking of reinforced-concrete pile cap schedules to EN 1992-1-1."""

__version__ = "0.1.0"


def review(source, profile: str = "uk-na", **kwargs):
    """Check a schedule (path or DataFrame) and return a :class:`checker.api.Review`.

    Imported lazily so that ``import checker`` stays cheap.
    """
    from checker.api import review as _review

    return _review(source, profile=profile, **kwargs)


__all__ = ["review", "__version__"]

"""Team derating profiles: named, versioned (every edit a new version, none changed), a default
per fixture, and the version each revision is judged by."""

from __future__ import annotations

from dataclasses import dataclass, replace

from sqlalchemy import func
from sqlmodel import Session, select

from app.engine.profile import (
    DEFAULT_PROFILE,
    FIGURES,
    PRESETS,
    Profile,
    ProfileError,
    figures_of,
    profile_from_dict,
)

from ..models import Channel, DeratingProfile, DeratingProfileVersion, Fixture, User
from .errors import InputProblems, check_text, get_or_not_found


@dataclass
class ProfileSummary:
    profile: DeratingProfile
    latest: DeratingProfileVersion
    fixtures: list[Fixture]


def _figures(values: dict, base: Profile) -> dict[str, float]:
    """The figures from a form or API body (fractions as 0.8 or "80 %"), or InputProblems by field."""
    given = {k: v for k, v in values.items() if k in FIGURES and str(v).strip() != ""}
    unknown = [k for k in values if k not in FIGURES]
    problems = [(k, f"is not a profile figure; allowed: {', '.join(FIGURES)}") for k in unknown]
    try:
        profile = profile_from_dict(
            {k: (v.strip() if isinstance(v, str) else v) for k, v in given.items()}, base
        )
    except ProfileError as exc:
        problems += exc.problems
        profile = None
    if problems:
        raise InputProblems(problems)
    return figures_of(profile)


def list_profiles(db: Session) -> list[ProfileSummary]:
    newest = (
        select(DeratingProfileVersion.profile_id, func.max(DeratingProfileVersion.version).label("v"))
        .group_by(DeratingProfileVersion.profile_id)
        .subquery()
    )
    rows = db.exec(
        select(DeratingProfile, DeratingProfileVersion)
        .join(newest, newest.c.profile_id == DeratingProfile.id)
        .join(
            DeratingProfileVersion,
            (DeratingProfileVersion.profile_id == DeratingProfile.id)
            & (DeratingProfileVersion.version == newest.c.v),
        )
        .order_by(DeratingProfile.name)
    ).all()
    users: dict[int, list[Fixture]] = {}
    for fixture in db.exec(
        select(Fixture).where(Fixture.default_profile_id.is_not(None)).order_by(Fixture.name)
    ):
        users.setdefault(fixture.default_profile_id, []).append(fixture)
    return [ProfileSummary(p, v, users.get(p.id, [])) for p, v in rows]


def get_profile(db: Session, profile_id: int) -> DeratingProfile:
    return get_or_not_found(db, DeratingProfile, profile_id, "profile")


def versions(db: Session, profile_id: int) -> list[tuple[DeratingProfileVersion, str]]:
    """Every version, newest first, with its author's name."""
    rows = db.exec(
        select(DeratingProfileVersion, User.name)
        .join(User, User.id == DeratingProfileVersion.author_id)
        .where(DeratingProfileVersion.profile_id == profile_id)
        .order_by(DeratingProfileVersion.version.desc())
    ).all()
    return [(v, name) for v, name in rows]


def latest_version(db: Session, profile_id: int) -> DeratingProfileVersion:
    return db.exec(
        select(DeratingProfileVersion)
        .where(DeratingProfileVersion.profile_id == profile_id)
        .order_by(DeratingProfileVersion.version.desc())
        .limit(1)
    ).one()


def create_profile(
    db: Session, user: User, name: str, preset: str, values: dict, note: str = ""
) -> DeratingProfile:
    """A new profile, version 1: the preset's figures with the given ones changed."""
    problems = []
    try:
        name = check_text("name", name, 120, required=True)
    except InputProblems as exc:
        problems += exc.problems
    if preset not in PRESETS:
        problems.append(("preset", f"{preset!r} is not a preset; allowed: {', '.join(PRESETS)}"))
    try:
        figures = _figures(values, PRESETS.get(preset, PRESETS["general"]))
    except InputProblems as exc:
        problems += exc.problems
    try:
        note = check_text("note", note, 2000)
    except InputProblems as exc:
        problems += exc.problems
    if not problems and db.exec(select(DeratingProfile.id).where(DeratingProfile.name == name)).first():
        problems.append(("name", f"a profile named {name!r} already exists"))
    if problems:
        raise InputProblems(problems)
    profile = DeratingProfile(name=name)
    db.add(profile)
    db.flush()
    note = note or f"started from the {preset} preset"
    db.add(
        DeratingProfileVersion(
            profile_id=profile.id, version=1, figures=figures, note=note, author_id=user.id
        )
    )
    db.commit()
    db.refresh(profile)
    return profile


def add_version(db: Session, user: User, profile_id: int, values: dict, note: str) -> DeratingProfileVersion:
    """An edit: a new version with the figures given (blank ones keep the newest version's)."""
    get_profile(db, profile_id)
    latest = latest_version(db, profile_id)
    base = replace(DEFAULT_PROFILE, **latest.figures)
    problems = []
    try:
        figures = _figures(values, base)
    except InputProblems as exc:
        problems += exc.problems
    try:
        note = check_text("note", note, 2000, required=True)
    except InputProblems:
        problems += [("note", "say what changed and why (it stays in the profile's history)")]
    if problems:
        raise InputProblems(problems)
    if figures == latest.figures:
        raise InputProblems([("figures", "nothing changed from the newest version")])
    version = DeratingProfileVersion(
        profile_id=profile_id, version=latest.version + 1, figures=figures, note=note, author_id=user.id
    )
    db.add(version)
    db.commit()  # two editors at once: the (profile, version) unique key refuses the second
    db.refresh(version)
    return version


def set_fixture_default(db: Session, fixture_id: int, profile_id: int | None) -> Fixture:
    fixture = get_or_not_found(db, Fixture, fixture_id, "fixture")
    if profile_id is not None and db.get(DeratingProfile, profile_id) is None:
        raise InputProblems([("profile", f"there is no profile {profile_id}")])
    fixture.default_profile_id = profile_id
    db.add(fixture)
    db.commit()
    return fixture


def version_in_force(db: Session, channel_id: int) -> int | None:
    """The profile version a revision of this channel is judged by now: the newest version of its
    fixture's default profile, or None for the built-in default."""
    profile_id = db.exec(
        select(Fixture.default_profile_id)
        .join(Channel, Channel.fixture_id == Fixture.id)
        .where(Channel.id == channel_id)
    ).first()
    if profile_id is None:
        return None
    return latest_version(db, profile_id).id


def engine_profile(db: Session, version_id: int | None) -> Profile:
    """The engine's Profile for a stored version (named "<name> v<N>"), or the built-in default."""
    if version_id is None:
        return DEFAULT_PROFILE
    version, name = db.exec(
        select(DeratingProfileVersion, DeratingProfile.name)
        .join(DeratingProfile, DeratingProfile.id == DeratingProfileVersion.profile_id)
        .where(DeratingProfileVersion.id == version_id)
    ).one()
    return replace(DEFAULT_PROFILE, name=f"{name} v{version.version}", **version.figures)

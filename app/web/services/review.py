"""Review and sign-off of revisions: every decision is app.signoff.workflow's, every action one
trail entry, each in its own transaction holding the trail's lock (see services/trail.py)."""

from __future__ import annotations

import json
from dataclasses import dataclass, field

from sqlmodel import Session, delete, select

from app.engine import ENGINE_VERSION
from app.signoff import workflow
from app.signoff.compare import Comparison, compare
from app.signoff.workflow import Refused

from ..models import Report, Revision, RevisionPart, TrailEntry, User
from . import profiles, trail
from .documents import content_hash
from .errors import InputProblems, NotFound
from .reports import cached_report, evaluate_document, profile_key, report_for

MAX_TEXT = 5000
MIN_JUSTIFICATION = 10
WAIVABLE = ("violation", "marginal")
# Saving a revision is not a workflow decision, but it is on the trail: it binds the first
# content hash to its author.
SAVE = "save"
ACTION_LABELS = {**workflow.ACTION_LABELS, SAVE: "saved the revision"}


def _refusal(exc: Refused, state: str, action: str, who, author_id: int) -> InputProblems:
    """403 when the person may not do this at all, 409 when the revision's state (or an
    unwaived violation) stands in the way: the workflow's own tables tell which."""
    status = 403
    if state not in workflow.ALLOWED_IN.get(action, ()):
        status = 409
    else:
        try:
            workflow.next_state(state, action, who, author_id, unwaived_violations=0)
            status = 409  # allowed but for the unwaived violations
        except Refused:
            pass
    return InputProblems([("action", str(exc))], status_code=status)


def _text(name: str, value: str | None, *, required: bool, minimum: int = 1) -> str:
    value = (value or "").strip()
    if "\x00" in value:
        raise InputProblems([(name, "must not contain NUL characters")])
    if required and len(value) < minimum:
        need = "must not be empty" if minimum == 1 else f"must be at least {minimum} characters"
        raise InputProblems([(name, need)])
    if len(value) > MAX_TEXT:
        raise InputProblems([(name, f"is too long (at most {MAX_TEXT} characters)")])
    return value


def waived_rules(db: Session, revision_id: int) -> dict[str, TrailEntry]:
    out = {}
    for entry in db.exec(
        select(TrailEntry).where(TrailEntry.revision_id == revision_id, TrailEntry.action == "waive")
    ):
        out[json.loads(entry.detail)["finding"]] = entry
    return out


def unwaived_violations(report_body: dict, waived) -> int:
    return sum(1 for f in report_body["findings"] if f["status"] == "violation" and f["rule"] not in waived)


def _act(
    db: Session,
    revision_id: int,
    user: User,
    action: str,
    detail: dict,
    check=None,
    change=None,
) -> TrailEntry:
    """One workflow action in one transaction: lock the trail, re-read the revision, let the
    workflow decide, check the input, change the revision, append the entry, commit."""
    revision = db.get(Revision, revision_id)
    if revision is None:
        raise NotFound(f"revision {revision_id}")
    if action in ("hand_in", "replace"):
        # Handed in, a revision is judged by the profile version in force now, and keeps it.
        version_id = profiles.version_in_force(db, revision.channel_id)
    else:
        version_id = revision.profile_version_id
    report = cached_report(
        db, revision.content_hash, revision.document, version_id
    )  # may commit: before the lock
    head = trail.lock(db)
    try:
        revision = db.get(Revision, revision_id, populate_existing=True)
        if revision.content_hash != report.content_hash:
            raise InputProblems([("revision", "was replaced while you acted; reload the page")], 409)
        waived = waived_rules(db, revision_id)
        who = trail.actor(user)
        try:
            new_state = workflow.next_state(
                revision.state,
                action,
                who,
                revision.author_id,
                unwaived_violations=unwaived_violations(report.body, waived),
            )
        except Refused as exc:
            raise _refusal(exc, revision.state, action, who, revision.author_id) from None
        if check is not None:
            check(revision, report.body, waived)
        if revision.profile_version_id != version_id:
            revision.profile_version_id = version_id
        if change is not None:
            report = change(revision) or report
        revision.state = new_state
        db.add(revision)
        waivers = len(waived) + (action == "waive")
        meaning = workflow.signature_meaning(action, report.body["profile"]["name"], waivers)
        entry = trail.append(db, head, revision, user, action, meaning, report.body, detail)
        db.commit()
    except BaseException:
        db.rollback()
        raise
    return entry


def hand_in(db: Session, revision_id: int, user: User, note: str = "") -> TrailEntry:
    return _act(db, revision_id, user, "hand_in", {"note": _text("note", note, required=False)})


def _finding(report_body: dict, rule: str) -> dict:
    for finding in report_body["findings"]:
        if finding["rule"] == rule:
            return finding
    rules = ", ".join(f["rule"] for f in report_body["findings"])
    raise InputProblems([("finding", f"{rule!r} is not a finding of this revision; its findings: {rules}")])


def comment(db: Session, revision_id: int, user: User, text: str, finding: str | None = None) -> TrailEntry:
    body = _text("text", text, required=True)
    finding = (finding or "").strip() or None

    def check(revision, report_body, waived):
        if finding is not None:
            _finding(report_body, finding)

    return _act(db, revision_id, user, "comment", {"finding": finding, "text": body}, check)


def waive(db: Session, revision_id: int, user: User, finding: str, justification: str) -> TrailEntry:
    finding = (finding or "").strip()
    body = _text("justification", justification, required=True, minimum=MIN_JUSTIFICATION)

    def check(revision, report_body, waived):
        found = _finding(report_body, finding)
        if found["status"] not in WAIVABLE:
            raise InputProblems(
                [
                    (
                        "finding",
                        f"{finding} is within limits or a note; only violations and marginal findings take a waiver",
                    )
                ]
            )
        if finding in waived:
            raise InputProblems(
                [("finding", f"{finding} already has a waiver (entry {waived[finding].seq})")], 409
            )

    return _act(db, revision_id, user, "waive", {"finding": finding, "justification": body}, check)


def send_back(db: Session, revision_id: int, user: User, note: str) -> TrailEntry:
    return _act(db, revision_id, user, "send_back", {"note": _text("note", note, required=True)})


def sign_off(db: Session, revision_id: int, user: User, note: str = "") -> TrailEntry:
    note = _text("note", note, required=False)
    detail: dict = {"note": note}

    def check(revision, report_body, waived):
        detail["waivers"] = sorted(waived)  # bound into the signature: exactly these were accepted

    return _act(db, revision_id, user, "sign_off", detail, check)


def replace_draft(db: Session, revision_id: int, user: User, document, change_note: str = "") -> TrailEntry:
    """The author swaps a draft's design document; its content hash and report follow."""
    from .revisions import _link_by_name, validate_document

    if not isinstance(document, dict):
        raise InputProblems([("document", "the design file must be a JSON object")])
    change_note = _text("change_note", change_note, required=False)
    validate_document(document)
    digest = content_hash(document)
    revision = db.get(Revision, revision_id)
    version_id = profiles.version_in_force(db, revision.channel_id) if revision is not None else None
    new_report = cached_report(db, digest, document, version_id)

    def change(revision):
        revision.document, revision.content_hash = document, digest
        revision.change_note = change_note or revision.change_note
        db.exec(delete(RevisionPart).where(RevisionPart.revision_id == revision.id))
        for slot, part_id in _link_by_name(db, document).items():
            db.add(RevisionPart(revision_id=revision.id, slot=slot, part_id=part_id))
        return new_report

    return _act(db, revision_id, user, "replace", {"change_note": change_note}, change=change)


def record_saved(db: Session, head, revision: Revision, author: User, report_body: dict) -> None:
    """Inside create_revision's locked transaction: the save entry, and every earlier revision
    of the channel that is not yet superseded becomes superseded (its sign-off stays on it)."""
    trail.append(
        db,
        head,
        revision,
        author,
        SAVE,
        "author saved this revision as a draft",
        report_body,
        {"label": revision.label, "change_note": revision.change_note},
    )
    earlier = db.exec(
        select(Revision)
        .where(Revision.channel_id == revision.channel_id, Revision.id != revision.id)
        .where(Revision.state != "superseded")
        .order_by(Revision.number)
    ).all()
    for old in earlier:
        old.state = workflow.next_state(old.state, "supersede", None, old.author_id)
        db.add(old)
        old_report = cached_report_in_lock(db, old)
        meaning = workflow.signature_meaning("supersede", old_report["profile"]["name"], 0)
        trail.append(
            db,
            head,
            old,
            author,
            "supersede",
            meaning,
            old_report,
            {"by": revision.label, "by_id": revision.id},
        )


def cached_report_in_lock(db: Session, revision: Revision) -> dict:
    """The stored report of an earlier revision (saved long ago, so it is there: no commit)."""
    found = db.exec(
        select(Report.body).where(
            Report.content_hash == revision.content_hash,
            Report.engine_version == ENGINE_VERSION,
            Report.profile_key == profile_key(revision.profile_version_id),
        )
    ).first()
    if found is not None:
        return found
    return evaluate_document(revision.document, profiles.engine_profile(db, revision.profile_version_id))


# ----- what the pages show -----


def done_message(db: Session, entry: TrailEntry) -> str:
    """What an action just did, in words, for the page its redirect lands on."""
    revision = db.get(Revision, entry.revision_id)
    rev = f"Rev {revision.label}"
    detail = json.loads(entry.detail)
    if entry.action == "hand_in":
        return f"{rev} handed in for review. It is frozen now; a reviewer signs it off or sends it back."
    if entry.action == "comment":
        where = f" on {detail['finding']}" if detail.get("finding") else ""
        return f"Comment added{where} (trail entry {entry.seq})."
    if entry.action == "waive":
        return f"Waiver recorded for {detail['finding']} (trail entry {entry.seq})."
    if entry.action == "send_back":
        return f"{rev} sent back to its author with what must change (trail entry {entry.seq})."
    if entry.action == "sign_off":
        return f"{rev} signed off (trail entry {entry.seq}); it is now the channel's approved baseline."
    if entry.action == "replace":
        return f"Draft {rev} replaced; its findings were evaluated again."
    return f"{ACTION_LABELS.get(entry.action, entry.action).capitalize()} (trail entry {entry.seq})."


@dataclass
class ActionChoice:
    action: str
    allowed: bool
    reason: str = ""


@dataclass
class ReviewEvent:
    """One thing said or decided in review, for the history: who, when, what, and the words."""

    action: str
    label: str
    who: str
    role: str
    at: str  # ISO UTC, as chained
    text: str = ""  # hand-in note, what must change, sign-off note, comment, justification
    finding: str | None = None
    revision_label: str = ""
    seq: int = 0


# What each action's text is called where it is shown.
TEXT_NAMES = {
    "hand_in": "Note to the reviewer",
    "send_back": "What must change",
    "sign_off": "Sign-off note",
    "comment": "Comment",
    "waive": "Justification",
    "replace": "Change note",
}
HISTORY_ACTIONS = ("hand_in", "comment", "waive", "send_back", "sign_off", "replace")


def _event(entry: TrailEntry, detail: dict, revision_label: str = "") -> ReviewEvent:
    text = detail.get("justification") if entry.action == "waive" else detail.get("text")
    if text is None:
        text = detail.get("note") or detail.get("change_note") or ""
    return ReviewEvent(
        entry.action,
        ACTION_LABELS.get(entry.action, entry.action),
        entry.user_name,
        entry.role,
        entry.at,
        text,
        detail.get("finding"),
        revision_label,
        entry.seq,
    )


@dataclass
class ReviewState:
    revision: Revision
    state_label: str
    entries: list[TrailEntry]
    history: list[ReviewEvent] = field(default_factory=list)  # this revision's, oldest first
    hand_in: ReviewEvent | None = None
    send_back: ReviewEvent | None = None
    sign_off: ReviewEvent | None = None
    comments: list[tuple[TrailEntry, dict]] = field(default_factory=list)  # on the revision
    finding_comments: dict[str, list[tuple[TrailEntry, dict]]] = field(default_factory=dict)
    waivers: dict[str, tuple[TrailEntry, dict]] = field(default_factory=dict)
    signatures: list[TrailEntry] = field(default_factory=list)
    choices: dict[str, ActionChoice] = field(default_factory=dict)
    unwaived: int = 0


PAGE_ACTIONS = ("hand_in", "comment", "waive", "send_back", "sign_off", "replace")


def review_state(db: Session, revision: Revision, report_body: dict, user: User | None) -> ReviewState:
    entries = trail.entries_for(db, revision.id)
    view = ReviewState(revision, workflow.STATE_LABELS[revision.state], entries)
    for entry in entries:
        detail = json.loads(entry.detail)
        if entry.action in HISTORY_ACTIONS:
            event = _event(entry, detail, revision.label)
            view.history.append(event)
            if entry.action in ("hand_in", "send_back", "sign_off"):
                setattr(view, entry.action, event)
        if entry.action == "comment":
            if detail.get("finding"):
                view.finding_comments.setdefault(detail["finding"], []).append((entry, detail))
            else:
                view.comments.append((entry, detail))
        elif entry.action == "waive":
            view.waivers[detail["finding"]] = (entry, detail)
        elif entry.action in ("sign_off", "send_back"):
            view.signatures.append(entry)
    view.unwaived = unwaived_violations(report_body, view.waivers)
    if user is not None:
        who = trail.actor(user)
        for action in PAGE_ACTIONS:
            try:
                workflow.next_state(
                    revision.state, action, who, revision.author_id, unwaived_violations=view.unwaived
                )
                view.choices[action] = ActionChoice(action, True)
            except Refused as exc:
                view.choices[action] = ActionChoice(action, False, str(exc))
    return view


def channel_history(db: Session, channel_id: int, up_to_number: int) -> list[ReviewEvent]:
    """What was said and decided on a channel's revisions up to and including one: hand-ins,
    comments, waivers, send-backs with their reasons, sign-offs; oldest first."""
    rows = db.exec(
        select(TrailEntry, Revision.label)
        .join(Revision, Revision.id == TrailEntry.revision_id)
        .where(Revision.channel_id == channel_id, Revision.number <= up_to_number)
        .where(TrailEntry.action.in_(HISTORY_ACTIONS))
        .order_by(TrailEntry.seq)
    ).all()
    return [_event(entry, json.loads(entry.detail), label) for entry, label in rows]


def signed_off_ids(db: Session, revision_ids: list[int]) -> set[int]:
    """Which of these revisions were signed off (a sign-off stays when a revision is superseded)."""
    if not revision_ids:
        return set()
    return set(
        db.exec(
            select(TrailEntry.revision_id).where(
                TrailEntry.revision_id.in_(revision_ids), TrailEntry.action == "sign_off"
            )
        )
    )


def approved_baseline(db: Session, channel_id: int) -> Revision | None:
    """The channel's approved baseline: its newest signed-off revision."""
    return db.exec(
        select(Revision)
        .join(TrailEntry, TrailEntry.revision_id == Revision.id)
        .where(Revision.channel_id == channel_id, TrailEntry.action == "sign_off")
        .order_by(Revision.number.desc())
        .limit(1)
    ).first()


def default_comparison(db: Session, revision: Revision) -> Revision | None:
    """What to compare a revision with: the channel's newest signed-off revision before it,
    else the revision just before it."""
    signed = db.exec(
        select(Revision)
        .join(TrailEntry, TrailEntry.revision_id == Revision.id)
        .where(Revision.channel_id == revision.channel_id, Revision.number < revision.number)
        .where(TrailEntry.action == "sign_off")
        .order_by(Revision.number.desc())
        .limit(1)
    ).first()
    if signed is not None:
        return signed
    return db.exec(
        select(Revision)
        .where(Revision.channel_id == revision.channel_id, Revision.number < revision.number)
        .order_by(Revision.number.desc())
        .limit(1)
    ).first()


@dataclass
class ComparisonView:
    old: Revision
    new: Revision
    comparison: Comparison


def compare_revisions(db: Session, channel_id: int, old_id: int, new_id: int) -> ComparisonView:
    old, new = db.get(Revision, old_id), db.get(Revision, new_id)
    problems = []
    for name, rev in (("old", old), ("new", new)):
        if rev is None:
            problems.append((name, f"revision {old_id if name == 'old' else new_id} does not exist"))
        elif rev.channel_id != channel_id:
            problems.append(
                (name, f"revision {rev.id} belongs to another channel; pick one of this channel's")
            )
    if problems:
        raise InputProblems(problems)
    old_report = report_for(db, old).body
    new_report = report_for(db, new).body
    return ComparisonView(old, new, compare(old.document, old_report, new.document, new_report))

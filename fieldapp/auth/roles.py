"""Role checks, enforced on the server."""

from __future__ import annotations

from functools import wraps

from flask import abort
from flask_login import current_user, login_required

#: Roles that create jobs and enter readings.
TESTING_ROLES = ("apprentice", "tester")
#: Roles that review, return and approve submitted jobs.
REVIEW_ROLES = ("supervisor",)


def role_required(*roles: str):
    """View decorator: logged in, and with one of ``roles`` (403 otherwise)."""

    def decorate(view):
        @wraps(view)
        @login_required
        def wrapped(*args, **kwargs):
            if current_user.role not in roles:
                abort(403)
            return view(*args, **kwargs)

        return wrapped

    return decorate


def can_test(user=None) -> bool:
    """True when the user may create jobs and enter readings."""
    user = current_user if user is None else user
    return bool(getattr(user, "is_authenticated", False)) and user.role in TESTING_ROLES


def can_review(user=None) -> bool:
    """True when the user may review and approve jobs."""
    user = current_user if user is None else user
    return bool(getattr(user, "is_authenticated", False)) and user.role in REVIEW_ROLES


def may_assign_tester(user, job) -> bool:
    """Who may change who tested a job: its tester or a supervisor (while no tester is set,
    the person who created the job)."""
    if user.role in REVIEW_ROLES:
        return True
    if job.tester_id is None:
        return job.created_by in (None, user.id)
    return job.tester_id == user.id


def may_submit(user, job) -> bool:
    """Who may submit a job for review: its tester, and for an apprentice's job (the
    apprentice is its tester) also the tester the apprentice works under. Never a supervisor:
    the person who reviews a job does not also put it forward (they reassign the tester)."""
    if user.role in REVIEW_ROLES:
        return False
    if job.tester_id == user.id:
        return True
    if job.tester_id is None:
        return job.created_by == user.id
    tester = job.tester
    return tester is not None and tester.role == "apprentice" and tester.mentor_id == user.id

"""The supervisor's account pages: list, add, disable or enable, reset a password.

A new or reset password is shown once, on a page the browser is told not to keep.
"""

from __future__ import annotations

from flask import flash, make_response, redirect, render_template, request, url_for
from flask_login import current_user
from sqlalchemy import select

from fieldapp.auth.roles import REVIEW_ROLES, role_required
from fieldapp.auth.views import hash_password
from fieldapp.extensions import db
from fieldapp.models import User
from fieldapp.users import bp, service
from fieldapp.users.forms import ActionForm, UserForm
from fieldapp.web import get_or_404, options


def _mentor_choices() -> list:
    testers = db.session.scalars(select(User).where(User.role == "tester",
                                                    User.disabled_at.is_(None))
                                 .order_by(User.name))
    return options([(0, "—")] + [(u.id, u.name) for u in testers])


def _password_page(user: User, password: str, what: str):
    response = make_response(render_template("users/password.html", user=user,
                                             password=password, what=what))
    response.headers["Cache-Control"] = "no-store"
    return response


@bp.get("/")
@role_required(*REVIEW_ROLES)
def index():
    users = list(db.session.scalars(select(User).order_by(User.role, User.name)))
    names = {u.id: u.name for u in users}
    return render_template("users/index.html", users=users, names=names,
                           action=ActionForm())


@bp.route("/new", methods=["GET", "POST"])
@role_required(*REVIEW_ROLES)
def new():
    form = UserForm()
    form.mentor_id.choices = _mentor_choices()
    if form.validate_on_submit():
        mentor = form.mentor_id.data or None
        password = service.new_password()
        try:
            user = service.add_user(form.username.data, form.name.data.strip(),
                                    form.role.data, hash_password(password), current_user,
                                    mentor_id=mentor)
        except ValueError as error:
            db.session.rollback()
            name, _, message = str(error).partition(": ")
            getattr(form, name, form.username).errors.append(message[:1].upper() + message[1:])
        else:
            db.session.commit()
            return _password_page(user, password, "created")
    status = 422 if request.method == "POST" else 200
    return render_template("users/form.html", form=form), status


@bp.get("/<int:user_id>")
@role_required(*REVIEW_ROLES)
def detail(user_id: int):
    user = get_or_404(User, user_id)
    return render_template("users/detail.html", user=user, events=service.events(user),
                           action=ActionForm(),
                           mentor=db.session.get(User, user.mentor_id) if user.mentor_id
                           else None)


def _checked(user_id: int):
    user = get_or_404(User, user_id)
    if not ActionForm().validate_on_submit():
        flash("The form expired: try again.", "error")
        return user, redirect(url_for("users.detail", user_id=user.id))
    return user, None


@bp.post("/<int:user_id>/disable")
@role_required(*REVIEW_ROLES)
def disable(user_id: int):
    user, refused = _checked(user_id)
    if refused:
        return refused
    if user.id == current_user.id:
        flash("You cannot disable your own account.", "error")
    else:
        service.disable(user, current_user)
        db.session.commit()
        flash(f"{user.name} is disabled and logged out everywhere.", "ok")
    return redirect(url_for("users.detail", user_id=user.id))


@bp.post("/<int:user_id>/enable")
@role_required(*REVIEW_ROLES)
def enable(user_id: int):
    user, refused = _checked(user_id)
    if refused:
        return refused
    service.enable(user, current_user)
    db.session.commit()
    flash(f"{user.name} may log in again.", "ok")
    return redirect(url_for("users.detail", user_id=user.id))


@bp.post("/<int:user_id>/reset-password")
@role_required(*REVIEW_ROLES)
def reset_password(user_id: int):
    user, refused = _checked(user_id)
    if refused:
        return refused
    password = service.new_password()
    service.set_password(user, hash_password(password), current_user, "password_reset")
    db.session.commit()
    if user.id == current_user.id:
        from flask_login import login_user

        login_user(user)
    return _password_page(user, password, "reset")

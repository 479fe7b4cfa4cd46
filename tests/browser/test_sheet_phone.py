"""On a phone: the job sheet link says it is working while the PDF is built, then hands the
file over; without JavaScript it is a plain link to the PDF."""

from __future__ import annotations

import pytest
from playwright.sync_api import expect
from test_review_phone import seed_submitted_job

pytestmark = pytest.mark.browser


@pytest.fixture
def reviewer(page, log_in):
    """A phone page logged in as the supervisor."""
    log_in(page, "supervisor")
    return page


def test_the_sheet_link_shows_progress_then_downloads(reviewer, live_app):
    page = reviewer
    job_id, _, reference = seed_submitted_job(live_app)
    page.goto(f"/review/jobs/{job_id}")
    link = page.locator("a[data-sheet-link]")
    expect(link).to_have_text("Job sheet (PDF)")
    with page.expect_download() as download:
        # the click handler changes the words at once, before the server has answered
        words = link.evaluate("el => { el.click(); return el.textContent; }")
    assert words.startswith("Building the job sheet")
    assert download.value.suggested_filename == f"{reference}.pdf"
    with open(download.value.path(), "rb") as pdf:
        assert pdf.read(5) == b"%PDF-"
    expect(page.locator(".sheet-status")).to_have_text(f"Job sheet ready: {reference}.pdf")
    expect(link).to_have_text("Job sheet (PDF)")
    expect(link).not_to_have_attribute("aria-busy", "true")


def test_without_javascript_the_link_is_the_pdf(browser, live_app, log_in):
    context = browser.new_context(base_url=live_app.url, java_script_enabled=False)
    page = context.new_page()
    try:
        log_in(page, "supervisor")
        job_id, _, _ = seed_submitted_job(live_app)
        page.goto(f"/review/jobs/{job_id}")
        href = page.locator("a[data-sheet-link]").get_attribute("href")
        reply = page.request.get(href)
        assert reply.status == 200 and reply.headers["content-type"] == "application/pdf"
        assert reply.body().startswith(b"%PDF-")
    finally:
        context.close()

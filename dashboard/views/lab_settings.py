"""Lab settings page (administrators): the lab's name, address line, logo, report footer and the
public address that share links start with.

The store keeps the settings and checks the role again on every save (:mod:`store.lab`);
each changed field is an audit event. Reports, the sign-in page and the coach view read them.
"""

from __future__ import annotations

from typing import Any

import streamlit as st

from dashboard import data, lab, state
from dashboard.errors import show_error
from store import PUBLIC_URL_ENV, public_base_url

LOGO_TYPES = ["png", "jpg", "jpeg"]


def changed_settings(identity: Any, *, name: str, address: str, footer: str, public_url: str) -> dict[str, str]:
    """The fields the administrator changed (keyword names of ``Store.set_lab_identity``)."""
    now = {"name": name, "address": address, "report_footer": footer, "public_url": public_url}
    return {k: v for k, v in now.items() if (v or "").strip() != (str(getattr(identity, k, "") or "")).strip()}


def render() -> None:
    st.title("Lab settings")
    st.caption(
        "What reports, the sign-in page and share links call your lab. Only administrators can change "
        "these; every change is recorded in the audit trail."
    )
    store = data.get_store()
    user = state.current_user()
    if state.user_role(user) != "admin":
        st.info("Only administrators can change the lab settings.")
        return
    identity = lab.read_identity(store)
    if identity is None:
        st.error("The lab settings could not be read (see the server log).")
        return
    with st.form("lab_settings"):
        name = st.text_input("Lab name (report letterhead, sign-in page, coach view)", value=identity.name, max_chars=200)
        address = st.text_input("Address line (report letterhead)", value=identity.address, max_chars=400)
        footer = st.text_area("Report footer (e.g. contact, accreditation)", value=identity.report_footer, max_chars=2000)
        public_url = st.text_input(
            "Public address of the dashboard (share links start with it)",
            value=identity.public_url,
            placeholder="https://tests.your-lab.example",
            help="The address coaches reach this dashboard at, usually behind a reverse proxy with TLS. "
            "Without a scheme, https:// is used.",
        )
        logo = st.file_uploader("Logo (PNG or JPEG, at most 200 kB)", type=LOGO_TYPES, key="lab_logo")
        remove_logo = st.checkbox("Remove the logo", value=False, disabled=not identity.has_logo)
        reason = st.text_input("Reason for the change (audit trail, optional)")
        saved = st.form_submit_button("Save the lab settings", type="primary")
    if saved:
        changes = changed_settings(identity, name=name, address=address, footer=footer, public_url=public_url)
        logo_bytes = logo.getvalue() if logo is not None else None
        if not changes and logo_bytes is None and not remove_logo:
            st.info("Nothing was changed.")
        else:
            try:
                identity = store.set_lab_identity(
                    actor=state.acting_user(), logo=logo_bytes, remove_logo=bool(remove_logo), reason=reason.strip(), **changes
                )
            except Exception as exc:  # noqa: BLE001 - refusals (role, size, address) shown plainly
                show_error(exc, context="Lab settings")
                return
            st.success("Lab settings saved.")
    if identity.has_logo and identity.logo is not None:
        st.image(identity.logo, caption="Current logo", width=160)
    effective = public_base_url(identity.public_url)
    if effective and effective != identity.public_url:
        st.caption(f"Share links start with {lab.markdown_text(effective)} (set by {PUBLIC_URL_ENV} on the server).")
    elif not effective:
        st.caption("No public address: share links use the address the reviewer reached the dashboard on.")

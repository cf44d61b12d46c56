"""Tidemark's Streamlit dashboard: renders and collects input only.

Every number shown is computed in :mod:`analysis`; persistence goes through :mod:`store`.
Run it with ``tidemark serve`` (or ``streamlit run dashboard/app.py``).
"""

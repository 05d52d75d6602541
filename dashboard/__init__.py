"""The assessor's dashboard: Streamlit pages that read widgets, call the engine and render."""

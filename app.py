"""The selector page (placeholder until the page is built): wiring only, no physics."""

import streamlit as st

st.set_page_config(page_title="selector", layout="wide")
st.title("Switch and heatsink selector")
st.write("The page is being built; use the `selector` command meanwhile.")

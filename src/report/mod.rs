//! Rendering assessment results: terminal table, JSON, CSV, HTML with inline SVG.

"""Stage 4, render: figures of form, force and load-path, headless (matplotlib, pyvista off-screen)."""

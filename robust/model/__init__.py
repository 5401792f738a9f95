"""What the user wrote: formulas, case files, the uncertain family, the dependency graph."""

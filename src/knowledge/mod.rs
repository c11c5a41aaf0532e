//! Layer 3b: knowledge tables from graphical-perception research, as data with citations.

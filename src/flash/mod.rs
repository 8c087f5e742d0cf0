//! Flash-safety analysis after W3C WCAG 2.x (in progress).

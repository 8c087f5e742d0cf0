//! Colours: parsing, sRGB transfer, LED bytes and fades (in progress).

"""Draw an SVG with the system's librsvg and cairo (through ctypes), as a desktop's image viewer
and file manager do; None where the libraries are not installed."""

from __future__ import annotations

import ctypes
import ctypes.util

from PySide6.QtGui import QImage


class _Dimensions(ctypes.Structure):
    _fields_ = [("width", ctypes.c_int), ("height", ctypes.c_int), ("em", ctypes.c_double), ("ex", ctypes.c_double)]


def _libraries():
    try:
        rsvg = ctypes.CDLL(ctypes.util.find_library("rsvg-2") or "librsvg-2.so.2")
        cairo = ctypes.CDLL(ctypes.util.find_library("cairo") or "libcairo.so.2")
    except OSError:
        return None
    rsvg.rsvg_handle_new_from_data.restype = ctypes.c_void_p
    rsvg.rsvg_handle_new_from_data.argtypes = [ctypes.c_char_p, ctypes.c_size_t, ctypes.c_void_p]
    rsvg.rsvg_handle_get_dimensions.argtypes = [ctypes.c_void_p, ctypes.POINTER(_Dimensions)]
    rsvg.rsvg_handle_render_cairo.argtypes = [ctypes.c_void_p, ctypes.c_void_p]
    cairo.cairo_image_surface_create.restype = ctypes.c_void_p
    cairo.cairo_create.restype = ctypes.c_void_p
    cairo.cairo_create.argtypes = [ctypes.c_void_p]
    cairo.cairo_surface_write_to_png.argtypes = [ctypes.c_void_p, ctypes.c_char_p]
    return rsvg, cairo


LIBRARIES = _libraries()


def draw(svg: bytes, png_path: str) -> QImage:
    """The picture librsvg draws of ``svg`` at its own size (written to ``png_path`` on the way)."""
    rsvg, cairo = LIBRARIES
    error = ctypes.c_void_p()
    handle = rsvg.rsvg_handle_new_from_data(svg, len(svg), ctypes.byref(error))
    assert handle, "librsvg refused the SVG"
    size = _Dimensions()
    rsvg.rsvg_handle_get_dimensions(handle, ctypes.byref(size))
    surface = cairo.cairo_image_surface_create(0, size.width, size.height)  # 0: CAIRO_FORMAT_ARGB32
    context = cairo.cairo_create(surface)
    assert rsvg.rsvg_handle_render_cairo(handle, context), "librsvg could not draw the SVG"
    cairo.cairo_surface_write_to_png(ctypes.c_void_p(surface), png_path.encode())
    cairo.cairo_destroy(ctypes.c_void_p(context))
    cairo.cairo_surface_destroy(ctypes.c_void_p(surface))
    return QImage(png_path)

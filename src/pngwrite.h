/* pngwrite.h — the one PNG encoder of the command-line tool (libpng): the audit pictures of
 * `lineate draw` (RGB) and the line crops of `lineate crop` (gray). Nothing here prints. */
#ifndef LINEATE_PNGWRITE_H
#define LINEATE_PNGWRITE_H

#include <stdint.h>
#include <stdio.h>

/* Encodes width x height pixels of `channels` bytes each (1: 8-bit gray, 3: 8-bit RGB), rows
 * of width x channels bytes one after the other, as a PNG to fp, and flushes fp; dpi > 0 goes
 * into the pHYs chunk. Returns 0, or -1 with errno set: the system's reason when a write
 * failed, ENOMEM, EINVAL for bad arguments, EIO when libpng failed otherwise. fp stays open. */
int lt_png_write(FILE *fp, const uint8_t *pixels, int width, int height, int channels, double dpi);

#endif

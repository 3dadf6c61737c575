/* Private: where a field of a JSON text is, for messages about a value
 * that parsed but is of the wrong type or out of its domain.  jansson gives
 * a line and column for syntax errors only; its tree keeps no positions,
 * so the readers look the field up again in the text, on the error path
 * only. */
#ifndef SP_JSON_LOCATE_H
#define SP_JSON_LOCATE_H

#include <stddef.h>

/* Finds the value of a field path in a JSON text: keys joined by '.',
 * array elements as [N] ("chosen.covariance.matrix[1][0]"; a key that
 * itself holds '.' or '[' is not found).  Sets *line and *col (1-based;
 * col counts UTF-8 characters, as jansson's syntax errors do) to the
 * value's first character and returns 1; when the path ends in a member
 * that is not there, to the '{' or '[' of the deepest container on the
 * path that is, and returns 2; returns 0 when the text is not JSON as far
 * as the path goes. */
int sp_json_locate(const char *text, size_t len, const char *path, long *line, long *col);

/* The same on the file at path (read again, at most 256 MiB, regular
 * files only); 0 when it cannot be read. */
int sp_json_locate_file(const char *file, const char *path, long *line, long *col);

#endif

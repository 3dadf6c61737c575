/* Private: the records' "provenance" object, built with the shared jansson
 * builders (json_build.h). */
#ifndef SP_PROVENANCE_INTERNAL_H
#define SP_PROVENANCE_INTERNAL_H

#include "json_build.h"
#include "scatterprop/provenance.h"

/* {"working_directory", "build": {...}, "libraries": {...}, "os": {...}}
 * from sp_provenance_get and the current directory (docs/run-record.md
 * lists the keys).  Failures are recorded in w->bad. */
json_t *sp_provenance_json_object(wctx *w);

/* s as a JSON string; bytes outside ASCII become '?' when s is not valid
 * UTF-8 (so a record never fails over a folder's or an argument's
 * encoding).  NULL s gives null. */
json_t *sp_provenance_text(wctx *w, const char *s);

#endif

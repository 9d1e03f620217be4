/* fuzz_protocol.c: the protocol syntax of predict --protocol and solve. */
#include "fuzz.h"
#include "cpdomain/protocol.h"

#include <string.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char *text = malloc(size + 1);
    if (!text)
        return 0;
    memcpy(text, data, size);
    text[size] = '\0';
    char msg[CPD_MSG_MAX];
    cpd_protocol *p = NULL;
    if (cpd_protocol_parse(text, &p, msg) == CPD_OK)
        FUZZ_CHECK(p != NULL);
    else
        FUZZ_CHECK(msg[0] != '\0');
    cpd_protocol_free(p);
    free(text);
    return 0;
}

# module_cycles.py ROOT: the first circle among the library modules (module X needs Y when src/X.c or
# include/cpdomain/X.h includes cpdomain/Y.h), printed as "a -> b -> a", or "none".
import re, glob, os, sys
root = sys.argv[1]
dep = {}
for f in glob.glob(os.path.join(root, 'src/*.c')) + glob.glob(os.path.join(root, 'include/cpdomain/*.h')):
    m = os.path.splitext(os.path.basename(f))[0]
    for inc in re.findall(r'#include "cpdomain/([a-z_0-9]+)\.h"', open(f).read()):
        if inc != m:
            dep.setdefault(m, set()).add(inc)
# modules that have a public header
mods = {os.path.splitext(os.path.basename(h))[0] for h in glob.glob(os.path.join(root, 'include/cpdomain/*.h'))}
color = {}
cycle = []
def visit(u, path):
    color[u] = 1
    for v in sorted(dep.get(u, ())):
        if v not in mods:
            continue
        if color.get(v) == 1:
            cycle.append(path + [v]); return True
        if not color.get(v) and visit(v, path + [v]):
            return True
    color[u] = 2
    return False
for m in sorted(mods):
    if not color.get(m) and visit(m, [m]):
        break
print(' -> '.join(cycle[0]) if cycle else 'none')

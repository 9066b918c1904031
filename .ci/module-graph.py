#!/usr/bin/env python3
# The imports between the top-level modules of src/ (crate::X outside test code), and any
# circle among them. Usage: python3 .ci/module-graph.py [src]
import os,re,sys
root=sys.argv[1] if len(sys.argv)>1 else 'src'
tops={}
for dp,dn,fn in os.walk(root):
    for f in fn:
        if not f.endswith('.rs'): continue
        p=os.path.join(dp,f); rel=os.path.relpath(p,root)
        top=rel.split(os.sep)[0].removesuffix('.rs')
        if top in ('lib','main'): continue
        t=open(p).read()
        i=t.find('#[cfg(test)]')
        if i>=0: t=t[:i]
        t=re.sub(r'//[^\n]*','',t)
        deps=set(re.findall(r'crate::([a-z_]+)',t))
        for g in re.findall(r'crate::\{([^}]*)\}',t,re.S):
            for part in g.split(','):
                part=part.strip()
                if part: deps.add(re.split(r'[:\s{]',part)[0])
        deps.discard(top); deps.discard('self')
        tops.setdefault(top,set()).update(deps)
for k in sorted(tops): print(k,'->',sorted(tops[k]))
# cycles
import itertools
def reach(a):
    seen=set();st=[a]
    while st:
        x=st.pop()
        for y in tops.get(x,()):
            if y not in seen: seen.add(y);st.append(y)
    return seen
cyc=[(a,b) for a in tops for b in tops[a] if a in reach(b)]
print('cycle edges:',sorted(cyc))

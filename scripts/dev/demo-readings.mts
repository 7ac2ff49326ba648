// Dev helper: sign in as the demo circulator and call in a full set of readings for a case.
const [,, base, caseId] = process.argv
const login = await fetch(`${base}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: 'circulator@demo.isthmus.test', password: 'isthmus-demo' }) })
const cookie = login.headers.getSetCookie()[0]!.split(';')[0]!
const post = (kind: string, value: number, slot = 0) => fetch(`${base}/api/cases/${caseId}/readings`, { method: 'POST', headers: { 'content-type': 'application/json', cookie }, body: JSON.stringify({ kind, value, slot, clientKey: crypto.randomUUID() }) }).then((r) => r.status)
console.log(await post('reamed_diameter', 12), await post('nail_length', 382), await post('native_angle', 128), await post('head_element_length', 97), await post('distal_depth', 39, 1), await post('distal_depth', 44, 2))

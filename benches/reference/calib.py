"""Platt recalibration of the lead frequency, measured on held-out cases.

Reads the per-case lines of `cargo run --release --example trust -- ... --dump cases.tsv`
(head, SNR, rule, stated support of the leader, leader right 0/1, truth margin) and reports the
ECE (four bins, Guo et al. 2017, ICML, eq. 3; from memory) of the raw support and of a Platt map
p = sigmoid(a logit(s) + b) (Platt 1999, "Probabilistic outputs for support vector machines";
from memory) fitted by scikit-learn's LogisticRegression on one half of the cases and scored on
the other half, and fitted on the matched head and scored on the mismatched one.

Usage: python benches/reference/calib.py cases.tsv
"""
import sys, numpy as np
from sklearn.linear_model import LogisticRegression
from sklearn.isotonic import IsotonicRegression
rows=[l.rstrip('\n').split('\t') for l in open(sys.argv[1])]
data={}
for h,snr,rule,s,c,m in rows:
    s=float(s)
    if not np.isfinite(s): continue
    data.setdefault(h,[]).append((s,int(c)))
edges=[0,0.5,0.7,0.9,1+1e-9]
def ece(s,c):
    s=np.asarray(s);c=np.asarray(c);e=0
    for a,b in zip(edges[:-1],edges[1:]):
        m=(s>=a)&(s<b)
        if m.sum(): e+=m.sum()/len(s)*abs(c[m].mean()-s[m].mean())
    return e
def logit(s):
    s=np.clip(s,0.005,0.995); return np.log(s/(1-s))
def platt(tr):
    s,c=np.array(tr).T
    lr=LogisticRegression(C=1e6).fit(logit(s)[:,None],c)
    return lambda x: lr.predict_proba(logit(np.asarray(x))[:,None])[:,1], (lr.coef_[0][0], lr.intercept_[0])
rng=np.random.default_rng(0)
for h,d in data.items():
    d=np.array(d); s,c=d[:,0],d[:,1]
    print(h,len(d),'raw ECE',round(ece(s,c),3))
    idx=rng.permutation(len(d)); half=len(d)//2
    for tr,te in [(idx[:half],idx[half:]),(idx[half:],idx[:half])]:
        f,ab=platt(d[tr]); print('  2-fold platt ab',np.round(ab,3),'heldout ECE',round(ece(f(s[te]),c[te]),3), 'raw heldout', round(ece(s[te],c[te]),3))
if len(data)==2:
    f,ab=platt(data['matched']); d=np.array(data['mismatched'])
    print('train matched -> mismatched ECE', round(ece(f(d[:,0]),d[:,1]),3), ab)

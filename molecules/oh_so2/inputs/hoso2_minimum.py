import numpy as np, math, json, time
from pyscf import gto, dft
from pyscf.geomopt.geometric_solver import optimize
from pyscf.hessian import thermo
t0=time.time()
d=json.load(open("hoso2.json"))
x=np.array(d["coords_A"])
# rotate H about the S-O(H) axis by 70 degrees to leave the Cs saddle
o=x[3]; axis=(x[0]-o)/np.linalg.norm(x[0]-o); v=x[4]-o
a=math.radians(70)
v=v*math.cos(a)+np.cross(axis,v)*math.sin(a)+axis*np.dot(axis,v)*(1-math.cos(a))
x[4]=o+v
mol=gto.M(atom=[(s,tuple(c)) for s,c in zip(d["symbols"],x)], basis="def2-svp", spin=1, charge=0, verbose=0)
mf=dft.UKS(mol).density_fit(); mf.xc="b3lyp"; mf.conv_tol=1e-10
mol_eq=optimize(mf, maxsteps=100)
mf=dft.UKS(mol_eq).density_fit(); mf.xc="b3lyp"; mf.conv_tol=1e-11; e=mf.kernel()
h=mf.Hessian().kernel()
res=thermo.harmonic_analysis(mol_eq, h, imaginary_freq=True)
fr=res["freq_wavenumber"]
out={"energy_hartree":float(e),"symbols":[mol_eq.atom_symbol(i) for i in range(mol_eq.natm)],
     "coords_A":(mol_eq.atom_coords(unit="Angstrom")).tolist(),"freq_cm1":[str(f) for f in fr],"seconds":time.time()-t0,
     "method":"UKS B3LYP/def2-SVP, density fitting, PySCF; geomeTRIC optimisation; analytic Hessian"}
json.dump(out, open("hoso2_min.json","w"), indent=1)
print(out)

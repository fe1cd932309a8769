import numpy as np, math, json, time
from pyscf import gto, dft
from pyscf.geomopt.geometric_solver import optimize
from pyscf.hessian import thermo
t0=time.time()
d=math.radians
th=d(74); ph=d(66.7)
O1=1.43*np.array([math.sin(th)*math.cos(ph), math.sin(th)*math.sin(ph), math.cos(th)])
O2=1.43*np.array([math.sin(th)*math.cos(ph), -math.sin(th)*math.sin(ph), math.cos(th)])
O3=np.array([0,0,-1.62])
H=O3+0.97*np.array([math.sin(d(107))*math.cos(d(180)),0,math.cos(d(107))])
atoms=[("S",(0,0,0)),("O",O1),("O",O2),("O",O3),("H",H)]
mol=gto.M(atom=[(a,tuple(x)) for a,x in atoms], basis="def2-svp", spin=1, charge=0, verbose=0)
mf=dft.UKS(mol).density_fit(); mf.xc="b3lyp"; mf.conv_tol=1e-10
mol_eq=optimize(mf, maxsteps=100)
mf=dft.UKS(mol_eq).density_fit(); mf.xc="b3lyp"; mf.conv_tol=1e-11; e=mf.kernel()
h=mf.Hessian().kernel()
res=thermo.harmonic_analysis(mol_eq, h)
out={"energy_hartree":e,"symbols":[mol_eq.atom_symbol(i) for i in range(mol_eq.natm)],
     "coords_A":(mol_eq.atom_coords(unit="Angstrom")).tolist(),"freq_cm1":[float(x) for x in np.real_if_close(res["freq_wavenumber"])],"seconds":time.time()-t0}
json.dump(out, open("hoso2.json","w"), indent=1)
print(out)

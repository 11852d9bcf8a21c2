* Divider stage included by top.cir; on its own it is a library
.model LAB_NPN NPN (IS=1e-14 BF=200 VAF=100)
*@part LAB_NPN vceo=40 vcbo=60 vebo=6 icmax=200m pd=500m tjmax=150 rthja=250 hfemin=100 hfemax=300
.subckt DIV top mid
R1 top mid 39k
R2 mid 0 10k
.ends

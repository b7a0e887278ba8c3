import sys, json, re, torch
from train_nli import CrossEncoder, base_model_dir
from transformers import AutoTokenizer
base=base_model_dir(); tok=AutoTokenizer.from_pretrained(base)
m=CrossEncoder(base); m.load_state_dict(torch.load(sys.argv[1])); m.eval()
facts={}
for line in open('../../testdata/demo/maren.yaml'):
    s=line.strip()
    if s.startswith('- id:'): cur=s.split(':',1)[1].strip()
    elif s.startswith('text:'): facts[cur]=s.split(':',1)[1].strip()
reps=[json.loads(l) for l in open('../../testdata/demo/replies.jsonl')]
def pc(a,b):
    e=tok([a],[b],return_tensors='pt')
    return torch.softmax(m(e['input_ids'],e['attention_mask'],e['token_type_ids']),-1)[0][0].item()
with torch.no_grad():
  for r in reps:
    sents=re.split(r'(?<=[.!?])\s+', r['text'])
    out=[]
    for fid,f in facts.items():
      best=0
      for s in sents:
        best=max(best,min(pc(f,s),pc(s,f)))
      out.append(f'{fid}={best:.2f}')
    print(r['id'], ' '.join(out), '|', r['text'])
